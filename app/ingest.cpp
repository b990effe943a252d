#include "app/ingest.h"

#include <glob.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <filesystem>
#include <future>
#include <map>
#include <set>

#include <spdlog/spdlog.h>

#include "gazemill/version.h"
#include "io/bids_reader.h"
#include "io/delimited_reader.h"
#include "io/sha256.h"
#include "pipeline/input_error.h"
#include "pipeline/named_regex.h"
#include "pipeline/trial_segmenter.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

// The sampling rates of eye trackers, generously: webcams to the fastest
// research systems (common practice, no source).
constexpr double kLeastRateHz = 10.0;
constexpr double kMostRateHz = 10000.0;

std::string format_number(double v) {
  char text[32];
  std::snprintf(text, sizeof text, "%.6g", v);
  return text;
}

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
      throw InputError({p.path, 0, "input.filename_pattern"},
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

std::string expand_template(const std::string& tmpl, const std::string& sample_file, const Identity& id) {
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
        if (it == vars.end()) throw InputError({"", 0, "input.messages.file"}, "unknown placeholder {" + key + "}");
        out += it->second;
        i = close;
        continue;
      }
    }
    out += tmpl[i];
  }
  return out;
}

InputFileRecord describe_input(const std::string& path, const std::string& recording) {
  InputFileRecord r;
  r.path = path;
  r.size_bytes = fs::file_size(path);
  r.sha256 = sha256_file(path);
  r.recording_id = recording;
  return r;
}

}  // namespace

std::string utc_now_iso8601() {
  const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

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

IngestReport ingest_study(const Protocol& protocol, const std::string& store_path, const StoreWriteOptions& options,
                          const IngestProgress& progress) {
  const std::vector<std::string> files = resolve_input_files(protocol);
  const TrialSegmenter segmenter(protocol.trials, protocol.input.repairs.unterminated_trials);
  StudyStoreWriter store(store_path, options);
  Provenance prov;
  prov.tool_version = kVersion;
  prov.protocol_path = fs::absolute(protocol.path).lexically_normal().string();
  prov.protocol_text = protocol.text;
  prov.protocol_sha256 = sha256_hex(protocol.text);
  prov.created_utc = utc_now_iso8601();
  IngestReport report;

  // BIDS: several files (one per eye) make one recording.
  std::vector<BidsRecordingFiles> bids;
  std::vector<std::string> primary = files;
  if (protocol.input.format == InputFormat::bids) {
    bids = group_bids_recordings(files);
    primary.clear();
    for (const auto& b : bids) primary.push_back(b.eyes.front().physio_tsv);
  }

  std::map<std::string, std::string> file_of_id;  // to name both files when two give one id
  for (std::size_t k = 0; k < primary.size(); ++k) {
    const std::string& file = primary[k];
    const Identity who = identify(protocol, file);
    Recording rec;
    rec.participant = who.participant;
    rec.session = who.session;
    rec.id = sanitize_id(who.session.empty() ? who.participant : who.participant + "_" + who.session);
    if (const auto [it, fresh] = file_of_id.emplace(rec.id, file); !fresh) {
      throw InputError({protocol.path, 0, "input.filename_pattern"},
                       "the files " + it->second + " and " + file + " both give recording '" + rec.id +
                           "' (participant and session); the pattern must tell them apart");
    }
    rec.source_file = file;
    spdlog::debug("reading {} as recording {}", file, rec.id);

    // Hash the inputs on another thread while this one parses.
    std::vector<std::string> to_hash;
    if (protocol.input.format == InputFormat::bids) {
      for (const auto& eye : bids[k].eyes) {
        for (const auto* f : {&eye.physio_tsv, &eye.physio_json, &eye.events_tsv, &eye.events_json}) {
          if (!f->empty()) to_hash.push_back(*f);
        }
      }
      if (!bids[k].screen_source.empty()) to_hash.push_back(bids[k].screen_source);
    } else {
      to_hash.push_back(file);
    }
    std::string message_file;
    if (protocol.input.message_file) {
      message_file = expand_template(protocol.input.message_file->path_template, file, who);
      if (!fs::exists(message_file)) {
        throw InputError({message_file, 0, "input.messages.file"}, "the message file for " + file + " does not exist");
      }
      to_hash.push_back(message_file);
    }
    auto hashes = std::async(std::launch::async, [to_hash, id = rec.id] {
      std::vector<InputFileRecord> out;
      for (const auto& f : to_hash) out.push_back(describe_input(f, id));
      return out;
    });

    DelimitedReadResult result;
    bool left = false, right = false;
    if (protocol.input.format == InputFormat::bids) {
      for (const auto& eye : bids[k].eyes) (eye.sidecar.recorded_eye == Eye::left ? left : right) = true;
      auto sink = store.begin_samples(rec.id, left, right);
      result = read_bids_recording(bids[k], protocol.input.table.missing_values, protocol.input.repairs.duplicate_timestamps, *sink);
      rec.sample_rate_hz = bids[k].eyes.front().sidecar.sampling_frequency_hz;
      if (bids[k].screen) rec.screen = *bids[k].screen;
      else if (protocol.screen) rec.screen = *protocol.screen;
      else throw InputError({file, 0, "StimulusPresentation"}, "no screen geometry: neither a task *_events.json with StimulusPresentation nor [screen] in the protocol");
    } else {
      left = protocol.input.table.left.has_value();
      right = protocol.input.table.right.has_value();
      auto sink = store.begin_samples(rec.id, left, right);
      DelimitedReadOptions opt;
      opt.layout = protocol.input.table;
      opt.duplicate_timestamps = protocol.input.repairs.duplicate_timestamps;
      if (progress) opt.progress = [&](std::uint64_t done, std::uint64_t total) { progress(file, done, total); };
      result = read_delimited(file, opt, *sink);
      rec.screen = *protocol.screen;
    }
    if (!message_file.empty()) {
      DelimitedReadOptions mopt;
      mopt.layout.delimiter = protocol.input.message_file->delimiter;
      mopt.layout.time_column = protocol.input.message_file->time_column;
      mopt.layout.time_unit = protocol.input.table.time_unit;
      mopt.layout.message_column = protocol.input.message_file->text_column;
      mopt.layout.missing_values = protocol.input.table.missing_values;
      mopt.layout_key = "input.messages";
      NullSink none;
      DelimitedReadResult m = read_delimited(message_file, mopt, none);
      result.messages = std::move(m.messages);
      result.message_lines = std::move(m.message_lines);
    }
    rec.samples.has_left = left;
    rec.samples.has_right = right;

    // Messages in time order (stable: same-time messages keep file order).
    std::vector<std::size_t> order(result.messages.size());
    for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
    std::stable_sort(order.begin(), order.end(),
                     [&](std::size_t a, std::size_t b) { return result.messages[a].time_us < result.messages[b].time_us; });
    std::vector<std::size_t> lines;
    for (std::size_t i : order) {
      rec.messages.push_back(std::move(result.messages[i]));
      lines.push_back(result.message_lines[i]);
    }
    std::string message_source = message_file.empty() ? file : message_file;
    if (protocol.input.format == InputFormat::bids && !bids[k].eyes.front().events_tsv.empty()) {
      message_source = bids[k].eyes.front().events_tsv;
    }
    rec.trials = segmenter.segment(rec.messages, lines, message_source, result.repairs);
    if (rec.trials.empty()) {
      throw InputError({message_source, 0, "trials.start"}, "no trial found: no message matches the start pattern \"" +
                                                                protocol.trials.start_pattern + "\"");
    }

    // Timestamps read in the wrong unit give a rate no tracker has (1 Hz from
    // microseconds read as milliseconds); they would pass unseen to every
    // duration downstream.
    if (result.median_interval_us > 0) {
      const double implied_hz = 1e6 / result.median_interval_us;
      if (implied_hz < kLeastRateHz || implied_hz > kMostRateHz) {
        const bool bids_input = protocol.input.format == InputFormat::bids;
        const std::string unit = bids_input ? to_string(bids[k].eyes.front().sidecar.timestamp_unit) : to_string(protocol.input.table.time_unit);
        throw InputError({bids_input ? bids[k].eyes.front().physio_json : file, 0, bids_input ? "timestamp.Units" : "input.table.time_unit"},
                         "the samples are a median " + format_number(result.median_interval_us / 1000.0) + " ms apart with times read in " +
                             unit + ", which is " + format_number(implied_hz) + " Hz; eye trackers sample at " +
                             format_number(kLeastRateHz) + " to " + format_number(kMostRateHz) + " Hz. Is " + unit +
                             " the unit of the time column?");
      }
    }
    if (protocol.input.sample_rate_hz > 0) rec.sample_rate_hz = protocol.input.sample_rate_hz;
    else if (rec.sample_rate_hz <= 0 && result.median_interval_us > 0) rec.sample_rate_hz = 1e6 / result.median_interval_us;

    SampleSummary summary;
    summary.sample_count = result.samples;
    summary.missing_left = result.missing_left;
    summary.missing_right = result.missing_right;
    summary.first_time_us = result.first_time_us;
    summary.last_time_us = result.last_time_us;
    store.write_recording(rec, summary);

    for (auto& f : hashes.get()) {
      report.input_bytes += f.size_bytes;
      prov.inputs.push_back(std::move(f));
    }
    for (const auto& [kind, n] : result.repairs) {
      prov.repairs.push_back({rec.id, kind, n});
      report.repairs += n;
      spdlog::warn("{}: repaired {} × {}", rec.id, n, kind);
    }
    ++report.recordings;
    report.samples += result.samples;
    report.messages += rec.messages.size();
    report.trials += rec.trials.size();
  }
  store.write_provenance(prov);
  store.commit();
  return report;
}

}  // namespace gazemill
