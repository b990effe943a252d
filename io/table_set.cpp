#include "io/table_set.h"

#include <fcntl.h>
#include <stdio.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>

#include "io/atomic_file.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

// A file's modification time in ns since 1970 (the file clock's own epoch is
// the library's choice); 0 when it cannot be read.
std::int64_t modified_ns(const fs::path& path) {
  std::error_code ec;
  const auto t = fs::last_write_time(path, ec);
  if (ec) return 0;
  return std::chrono::duration_cast<std::chrono::nanoseconds>(std::chrono::file_clock::to_sys(t).time_since_epoch()).count();
}


void write_file(const std::string& path, const std::string& text) {
  errno = 0;
  std::ofstream out(path, std::ios::binary);
  out << text;
  out.flush();
  if (!out) throw InputError({path, 0, ""}, std::string("cannot write: ") + (errno ? std::strerror(errno) : "the write failed"));
}

}  // namespace

TableSet::TableSet(std::string folder) : folder_(std::move(folder)) {
  while (folder_.size() > 1 && folder_.back() == '/') folder_.pop_back();
  check_table_folder(folder_);
  std::error_code ec;
  temp_ = temporary_path_beside(folder_);
  fs::remove_all(temp_, ec);
  fs::create_directories(temp_, ec);
  if (ec) throw InputError({folder_, 0, ""}, "cannot create the folder " + temp_ + ": " + ec.message());
}

TableSet::~TableSet() {
  if (committed_) return;
  std::error_code ec;
  fs::remove_all(temp_, ec);
}

void TableSet::add(const std::string& name, const std::string& text) {
  const fs::path path = fs::path(temp_) / name;  // may lie in a subfolder of the set
  std::error_code ec;
  fs::create_directories(path.parent_path(), ec);
  write_file(path.string(), text);
  names_.push_back(name);
}

void TableSet::write_in_pieces(const std::string& name, const std::function<void(const TextPieces&)>& make) const {
  write_in_pieces(std::vector<std::string>{name}, [&make](const std::vector<TextPieces>& files) { make(files[0]); });
}

void TableSet::write_in_pieces(const std::vector<std::string>& names, const std::function<void(const std::vector<TextPieces>&)>& make) const {
  std::vector<fs::path> paths;
  std::vector<std::ofstream> outs;
  errno = 0;
  for (const auto& name : names) {
    paths.push_back(fs::path(temp_) / name);
    std::error_code ec;
    fs::create_directories(paths.back().parent_path(), ec);
    outs.emplace_back(paths.back(), std::ios::binary);
  }
  std::vector<TextPieces> pieces;
  for (auto& out : outs) {
    pieces.emplace_back([&out](std::string_view piece) { out.write(piece.data(), static_cast<std::streamsize>(piece.size())); });
  }
  make(pieces);
  for (std::size_t i = 0; i < outs.size(); ++i) {
    outs[i].flush();
    if (!outs[i]) throw InputError({paths[i].string(), 0, ""}, std::string("cannot write: ") + (errno ? std::strerror(errno) : "the write failed"));
  }
}

void TableSet::commit(const std::string& manifest_json) {
  // The files of the set, so that a file added to the folder later is told apart.
  nlohmann::json manifest = nlohmann::json::parse(manifest_json);
  std::vector<std::string> files = names_;
  std::sort(files.begin(), files.end());
  manifest["files"] = files;
  // Each file as written, so that one deleted, cut short or edited since is told (table_set_intact).
  nlohmann::json written = nlohmann::json::object();
  for (const auto& f : files) {
    const fs::path path = fs::path(temp_) / f;
    written[f] = {{"bytes", fs::file_size(path)}, {"modified_ns", modified_ns(path)}};
  }
  manifest["written"] = written;
  write_file((fs::path(temp_) / kManifestName).string(), manifest.dump(2) + "\n");
  std::error_code ec;
  if (fs::exists(folder_, ec)) {
    // Swap the two folders in one step where the system can (Linux 3.15+),
    // then remove the old set; otherwise move the old one aside first.
    if (::renameat2(AT_FDCWD, temp_.c_str(), AT_FDCWD, folder_.c_str(), RENAME_EXCHANGE) == 0) {
      committed_ = true;
      fs::remove_all(temp_, ec);
      return;
    }
    const std::string aside = temp_ + "-old";
    fs::rename(folder_, aside, ec);
    if (ec) throw InputError({folder_, 0, ""}, "cannot replace the tables folder: " + ec.message());
    fs::rename(temp_, folder_, ec);
    if (ec) {
      std::error_code back;
      fs::rename(aside, folder_, back);
      throw InputError({folder_, 0, ""}, "cannot move the new tables into place: " + ec.message());
    }
    committed_ = true;
    fs::remove_all(aside, ec);
    return;
  }
  fs::create_directories(fs::path(folder_).parent_path(), ec);
  fs::rename(temp_, folder_, ec);
  if (ec) throw InputError({folder_, 0, ""}, "cannot move the new tables into place: " + ec.message());
  committed_ = true;
}

namespace {

nlohmann::json manifest_of(const std::string& folder) {
  std::ifstream in(fs::path(folder) / kManifestName);
  if (!in) return nullptr;
  std::stringstream s;
  s << in.rdbuf();
  return nlohmann::json::parse(s.str(), nullptr, false);
}

}  // namespace

std::string read_manifest(const std::string& folder) {
  nlohmann::json m = manifest_of(folder);
  if (m.is_null()) return "";
  if (m.is_discarded() || !m.is_object()) return "(unreadable)";
  m.erase("files");
  m.erase("written");
  return m.dump(2);
}

bool table_set_intact(const std::string& folder) {
  const nlohmann::json m = manifest_of(folder);
  if (!m.is_object() || !m.contains("files") || !m["files"].is_array() || !m.contains("written") || !m["written"].is_object()) return false;
  for (const auto& f : m["files"]) {
    if (!f.is_string() || !m["written"].contains(f.get<std::string>())) return false;
    const auto& w = m["written"][f.get<std::string>()];
    const fs::path path = fs::path(folder) / f.get<std::string>();
    std::error_code ec;
    const auto bytes = fs::file_size(path, ec);
    if (ec) return false;
    if (!w.is_object() || w.value("bytes", std::uintmax_t{0}) != bytes || w.value("modified_ns", std::int64_t{0}) != modified_ns(path)) {
      return false;
    }
  }
  return true;
}

void check_table_folder(const std::string& folder) {
  // The set replaces the whole folder: it must be one of ours, or new, or empty.
  std::error_code ec;
  if (!fs::exists(folder, ec)) return;
  if (!fs::is_directory(folder, ec)) throw InputError({folder, 0, ""}, "is a file; the tables go into a folder of their own");
  if (fs::is_empty(folder, ec)) return;
  const nlohmann::json m = manifest_of(folder);
  if (m.is_null()) {
    throw InputError({folder, 0, ""}, "holds files that are not gazemill tables (it has no " + std::string(kManifestName) +
                                          "); the tables replace their whole folder, so name a new or empty one (if they are gazemill's "
                                          "tables whose " + std::string(kManifestName) + " was removed, remove the folder: the run writes it again)");
  }
  if (!m.is_object() || !m.contains("files") || !m["files"].is_array()) return;  // a set from before the list was kept
  std::set<std::string> ours;
  for (const auto& f : m["files"]) {
    if (f.is_string()) ours.insert(f.get<std::string>());
  }
  for (auto it = fs::recursive_directory_iterator(folder, ec); !ec && it != fs::recursive_directory_iterator(); it.increment(ec)) {
    if (it->is_directory(ec)) continue;
    const std::string name = fs::relative(it->path(), folder, ec).generic_string();
    if (name == kManifestName || ours.count(name)) continue;
    throw InputError({it->path().string(), 0, ""}, "was added to a gazemill tables folder after the tables were written; the tables "
                                                   "replace their whole folder, so move it out first (or name another folder)");
  }
}

}  // namespace gazemill
