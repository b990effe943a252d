#include "io/bids_sidecars.h"

#include <algorithm>
#include <fstream>
#include <nlohmann/json.hpp>

#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;
using nlohmann::json;

const std::string* BidsName::entity(const std::string& key) const {
  for (const auto& [k, v] : entities) {
    if (k == key) return &v;
  }
  return nullptr;
}

std::optional<BidsName> parse_bids_name(const std::string& file_name) {
  if (file_name.empty() || file_name.find('/') != std::string::npos) return std::nullopt;
  BidsName n;
  const auto dot = file_name.find('.');
  const std::string stem = file_name.substr(0, dot);
  if (dot != std::string::npos) n.extension = file_name.substr(dot);
  std::vector<std::string> parts;
  std::size_t start = 0;
  for (;;) {
    const auto us = stem.find('_', start);
    parts.push_back(stem.substr(start, us == std::string::npos ? std::string::npos : us - start));
    if (us == std::string::npos) break;
    start = us + 1;
  }
  n.suffix = parts.back();
  if (n.suffix.empty() || n.suffix.find('-') != std::string::npos) return std::nullopt;
  parts.pop_back();
  for (const auto& p : parts) {
    const auto dash = p.find('-');
    if (dash == std::string::npos || dash == 0 || dash + 1 == p.size()) return std::nullopt;
    n.entities.emplace_back(p.substr(0, dash), p.substr(dash + 1));
  }
  return n;
}

fs::path bids_dataset_root(const fs::path& data_file) {
  const fs::path file = fs::absolute(data_file).lexically_normal();
  const fs::path folder = file.parent_path();
  std::error_code ec;
  for (fs::path d = folder; !d.empty(); d = d.parent_path()) {
    if (fs::exists(d / "dataset_description.json", ec)) return d;
    if (d == d.parent_path()) break;
  }
  fs::path walked;
  for (const auto& part : folder) {
    if (part.string().rfind("sub-", 0) == 0) return walked;
    walked /= part;
  }
  return folder;
}

std::vector<std::string> applicable_bids_files(const std::string& data_file, const std::string& suffix, const std::string& extension) {
  const fs::path file = fs::absolute(fs::path(data_file)).lexically_normal();
  const auto data = parse_bids_name(file.filename().string());
  if (!data) return {};
  const fs::path root = bids_dataset_root(file);
  // The folders from the root down to the file's own (rule 2a: its level or higher).
  std::vector<fs::path> levels;
  for (fs::path d = file.parent_path();; d = d.parent_path()) {
    levels.push_back(d);
    if (d == root || d == d.parent_path()) break;
  }
  std::reverse(levels.begin(), levels.end());
  std::vector<std::string> out;
  for (const auto& dir : levels) {
    std::vector<std::string> here;
    std::error_code ec;
    for (fs::directory_iterator it(dir, ec), end; !ec && it != end; it.increment(ec)) {
      const std::string name = it->path().filename().string();
      const auto meta = parse_bids_name(name);
      if (!meta || meta->suffix != suffix || meta->extension != extension) continue;  // rule 2b
      const bool subset = std::all_of(meta->entities.begin(), meta->entities.end(), [&](const auto& kv) {
        const std::string* v = data->entity(kv.first);
        return v && *v == kv.second;  // rule 2c
      });
      std::error_code fe;
      if (subset && fs::is_regular_file(it->path(), fe)) here.push_back(it->path().string());
    }
    std::sort(here.begin(), here.end());
    if (here.size() > 1) {
      throw InputError({here[1], 0, ""}, "applies to " + file.string() + " at the same folder level as " + here[0] +
                                             "; the BIDS Inheritance Principle (rule 4) allows one applicable " + suffix +
                                             extension + " file per level: give one of them more entities or move it");
    }
    if (!here.empty()) out.push_back(here[0]);
  }
  return out;
}

std::string MergedSidecar::file_of(const std::string& key) const {
  const auto it = origin.find(key);
  if (it != origin.end()) return it->second.file;
  return files.empty() ? std::string() : files.back();
}

std::vector<std::string> MergedSidecar::describe() const {
  std::vector<std::string> out;
  for (const auto& [key, o] : origin) {
    std::string line = key + ": " + o.file;
    if (!o.overridden.empty()) {
      line += " (overrides";
      for (std::size_t i = 0; i < o.overridden.size(); ++i) line += (i ? ", " : " ") + o.overridden[i];
      line += ")";
    }
    out.push_back(std::move(line));
  }
  return out;
}

MergedSidecar merge_bids_sidecars(const std::vector<std::string>& files) {
  MergedSidecar m;
  json merged = json::object();
  for (const auto& path : files) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError({path, 0, ""}, "cannot open the JSON sidecar");
    json j;
    try {
      j = json::parse(in);  // a UTF-8 byte-order mark is skipped by the parser
    } catch (const json::exception& e) {  // parse_error, and out_of_range for a number past a double (found by fuzzing)
      throw InputError({path, 0, ""}, std::string("not valid JSON: ") + e.what());
    }
    if (!j.is_object()) throw InputError({path, 0, ""}, "a BIDS sidecar is a JSON object ({...}), found " + std::string(j.type_name()));
    for (auto it = j.begin(); it != j.end(); ++it) {
      SidecarKeyOrigin& o = m.origin[it.key()];
      if (!o.file.empty()) o.overridden.push_back(o.file);
      o.file = path;
      merged[it.key()] = it.value();  // rule 5b: the lower file's value replaces the key whole
    }
    m.files.push_back(path);
  }
  m.json = merged.dump();
  return m;
}

MergedSidecar inherited_sidecar(const std::string& data_file, const std::string& suffix) {
  return merge_bids_sidecars(applicable_bids_files(data_file, suffix, ".json"));
}

}  // namespace gazemill
