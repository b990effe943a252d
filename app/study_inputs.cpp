#include "app/study_inputs.h"

#include <glob.h>

#include <algorithm>
#include <cstring>
#include <filesystem>
#include <map>
#include <set>

#include "pipeline/input_error.h"
#include "pipeline/named_regex.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

struct Identity {
  std::string participant;
  std::string session;
  std::map<std::string, std::string> captures;
};

std::string sanitize_id(std::string s) {
  for (char& c : s) {
    if (c == '/' || c == '.' || c == ' ' || c == '\t') c = '-';
  }
  return s;
}

Identity identify(const Protocol& p, const std::string& file) {
  Identity id;
  const std::string name = fs::path(file).filename().string();
  if (!p.input.filename_pattern.empty()) {
    NamedRegex re(p.input.filename_pattern);
    // The file name first (BIDS entities live there); the whole path when the
    // pattern needs folder names.
    auto caps = re.search(name);
    if (!caps) caps = re.search(file);
    if (!caps) {
      throw InputError({p.path, p.input.filename_pattern_line, "input.filename_pattern"},
                       "the pattern does not match the input file " + file + "; it must match every file of input.files");
    }
    id.captures = *caps;
    if (caps->count("participant")) id.participant = caps->at("participant");
    if (caps->count("session")) id.session = caps->at("session");
  }
  if (id.participant.empty()) {
    std::string stem = name;
    for (const char* ext : {".gz", ".tsv", ".csv", ".txt"}) {
      if (stem.size() > std::strlen(ext) && stem.substr(stem.size() - std::strlen(ext)) == ext) stem.resize(stem.size() - std::strlen(ext));
    }
    id.participant = stem;
  }
  return id;
}

std::string expand_template(const std::string& protocol_path, const std::string& tmpl, const std::string& sample_file, const Identity& id,
                            const std::string& key_name = "input.messages.file") {
  const fs::path f(sample_file);
  std::string name = f.filename().string();
  std::string stem = name;
  if (stem.size() > 3 && stem.substr(stem.size() - 3) == ".gz") stem.resize(stem.size() - 3);
  stem = fs::path(stem).stem().string();
  std::map<std::string, std::string> vars = id.captures;
  vars["dir"] = f.parent_path().string();
  vars["name"] = name;
  vars["stem"] = stem;
  std::string out;
  for (std::size_t i = 0; i < tmpl.size(); ++i) {
    if (tmpl[i] == '{') {
      const auto close = tmpl.find('}', i);
      if (close != std::string::npos) {
        const std::string key = tmpl.substr(i + 1, close - i - 1);
        auto it = vars.find(key);
        if (it == vars.end()) {
          std::string names;
          for (const auto& [n, v] : vars) names += (names.empty() ? "" : ", ") + n;
          throw InputError({protocol_path, 0, key_name}, "unknown placeholder {" + key + "}; the names are " + names +
                                                             " (dir, name and stem of the sample file, and what input.filename_pattern captures)");
        }
        out += it->second;
        i = close;
        continue;
      }
    }
    out += tmpl[i];
  }
  return out;
}

}  // namespace

std::vector<std::string> resolve_input_files(const Protocol& p) {
  const fs::path base = fs::absolute(fs::path(p.path)).parent_path();
  std::set<std::string> found;
  for (const auto& pattern : p.input.files) {
    const fs::path full = fs::path(pattern).is_absolute() ? fs::path(pattern) : base / pattern;
    glob_t g{};
    const int rc = ::glob(full.c_str(), 0, nullptr, &g);
    if (rc == GLOB_NOMATCH || (rc == 0 && g.gl_pathc == 0)) {
      globfree(&g);
      throw InputError({p.path, 0, "input.files"}, "the pattern \"" + pattern + "\" matches no file (looked for " + full.string() + ")");
    }
    if (rc != 0) {
      globfree(&g);
      throw InputError({p.path, 0, "input.files"}, "cannot expand the pattern \"" + pattern + "\"");
    }
    for (std::size_t i = 0; i < g.gl_pathc; ++i) found.insert(fs::path(g.gl_pathv[i]).lexically_normal().string());
    globfree(&g);
  }
  return {found.begin(), found.end()};
}

std::vector<RecordingInputs> find_recordings(const Protocol& protocol) {
  const std::vector<std::string> files = resolve_input_files(protocol);
  // BIDS: several files (one per eye) make one recording.
  std::vector<BidsRecordingFiles> bids;
  std::vector<std::string> primary = files;
  if (protocol.input.format == InputFormat::bids) {
    bids = group_bids_recordings(files, protocol.input.bids);
    primary.clear();
    for (const auto& b : bids) primary.push_back(b.eyes.front().physio_tsv);
  }
  std::vector<RecordingInputs> out;
  std::map<std::string, std::string> file_of_id;  // to name both files when two give one id
  for (std::size_t k = 0; k < primary.size(); ++k) {
    const std::string& file = primary[k];
    const Identity who = identify(protocol, file);
    RecordingInputs r;
    r.participant = who.participant;
    r.session = who.session;
    r.id = sanitize_id(who.session.empty() ? who.participant : who.participant + "_" + who.session);
    if (protocol.input.format == InputFormat::bids) {
      // Runs of one task are recordings of their own (BIDS v1.11.0, "Entities": run).
      const auto name = parse_bids_name(fs::path(file).filename().string());
      if (name && name->entity("run")) r.id += sanitize_id("_run" + *name->entity("run"));
    }
    if (const auto [it, fresh] = file_of_id.emplace(r.id, file); !fresh) {
      throw InputError({protocol.path, protocol.input.filename_pattern_line, "input.filename_pattern"},
                       "the files " + it->second + " and " + file + " both give recording '" + r.id +
                           "' (participant and session); the pattern must tell them apart");
    }
    r.sample_file = file;
    if (protocol.input.format == InputFormat::bids) {
      r.bids = bids[k];
      for (const auto& f : bids_input_files(bids[k])) r.files.push_back(f);
    } else {
      r.files.push_back(file);
    }
    if (protocol.input.message_file) {
      r.message_file = expand_template(protocol.path, protocol.input.message_file->path_template, file, who);
      if (!fs::exists(r.message_file)) {
        throw InputError({r.message_file, 0, "input.messages.file"}, "the message file for " + file + " does not exist");
      }
      r.files.push_back(r.message_file);
    }
    if (protocol.trials.source == TrialSource::table) {
      r.trial_table_file = expand_template(protocol.path, protocol.trials.table_template, file, who, "trials.table");
      if (!fs::exists(r.trial_table_file)) {
        throw InputError({r.trial_table_file, 0, "trials.table"}, "the trial table for " + file + " does not exist");
      }
      r.files.push_back(r.trial_table_file);
    }
    out.push_back(std::move(r));
  }
  std::sort(out.begin(), out.end(), [](const RecordingInputs& a, const RecordingInputs& b) { return a.id < b.id; });
  return out;
}

}  // namespace gazemill
