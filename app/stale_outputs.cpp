#include "app/stale_outputs.h"

#include <spdlog/spdlog.h>

#include <filesystem>
#include <nlohmann/json.hpp>
#include <optional>

#include "app/study_run.h"
#include "io/study_store.h"
#include "io/table_set.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

// Replaces `to` (a file or folder) with `from`.
void rename_over(const fs::path& from, const fs::path& to) {
  std::error_code ec;
  fs::remove_all(to, ec);
  fs::rename(from, to);
}

}  // namespace

std::vector<std::string> set_aside_stale_outputs(const std::string& store_path, const std::string& just_written) {
  std::vector<std::string> set_aside;
  const fs::path store = fs::absolute(store_path).lexically_normal();
  const fs::path run_tables = store.parent_path() / "tables";
  std::optional<StudyStoreReader> reader;
  for (const fs::path& folder : {run_tables, fs::path(default_tables_folder(store.string()))}) {
    std::error_code ec;
    if (!just_written.empty() && fs::equivalent(folder, just_written, ec)) continue;
    const std::string text = read_manifest(folder.string());
    if (text.empty()) continue;
    const nlohmann::json manifest = nlohmann::json::parse(text, nullptr, false);
    if (manifest.is_discarded() || !manifest.contains("stages")) continue;
    // Its store, or one of the same name beside it: the run's folder copied
    // whole (found in a newcomer's trial: the copy's tables were left as current).
    const fs::path named = manifest.value("store", "");
    if (named != store && !(folder == run_tables && named.filename() == store.filename())) continue;
    if (!reader) reader.emplace(store.string());
    if (named != store) {  // a copy's tables read the same recordings: the same ingest
      const auto ingest = reader->stage_record(Stage::ingest);
      const auto key = manifest["stages"].find("ingest");
      if (!ingest || key == manifest["stages"].end() || !key->is_string() || key->get<std::string>() != ingest->key) continue;
    }
    bool stale = false;
    for (Stage s : kStages) {
      const auto key = manifest["stages"].find(to_string(s));
      if (key == manifest["stages"].end()) continue;
      const auto record = reader->stage_record(s);
      stale = stale || !record || record->state != StageState::current || record->key != key->get<std::string>();
    }
    if (!stale) continue;
    const fs::path aside = folder.string() + ".stale";
    rename_over(folder, aside);
    set_aside.push_back(aside.string());
    if (folder == run_tables) {  // the run's report and summary were made with its tables
      for (const auto& [name, stale_name] : {std::pair{"report.html", "report.stale.html"}, std::pair{"run-summary.json", "run-summary.stale.json"}}) {
        const fs::path made = folder.parent_path() / name;
        if (!fs::exists(made, ec)) continue;
        rename_over(made, folder.parent_path() / stale_name);
        set_aside.push_back((folder.parent_path() / stale_name).string());
      }
    }
  }
  return set_aside;
}

void remove_stale_outputs(const std::string& run_folder) {
  std::error_code ec;
  for (const char* name : {"tables.stale", "report.stale.html", "run-summary.stale.json"}) {
    const fs::path p = fs::path(run_folder) / name;
    if (fs::exists(p, ec) && fs::remove_all(p, ec) > 0) spdlog::info("removed {}: the run made it again", p.string());
  }
}

}  // namespace gazemill
