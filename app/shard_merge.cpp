#include "app/shard_merge.h"

#include <spdlog/spdlog.h>

#include <filesystem>
#include <algorithm>
#include <iterator>
#include <map>
#include <optional>
#include <memory>
#include <set>

#include "app/protocol_parser.h"
#include "gazemill/version.h"
#include "io/sha256.h"
#include "io/study_store.h"
#include "io/write_lock.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

std::string shard_store_name(const std::string& study, unsigned index, unsigned count) {
  return (study.empty() ? std::string("study") : study) + ".shard-" + std::to_string(index) + "-of-" + std::to_string(count) + ".gzm.h5";
}

StudyRunReport merge_shards(const std::vector<std::string>& shards, const std::string& out_folder) {
  if (shards.empty()) throw InputError({"", 0, "merge"}, "name the shard stores to merge");
  // Every shard: ingested and detected, with the same settings, one of N.
  std::vector<std::unique_ptr<StudyStoreReader>> readers;
  std::optional<StageRecord> ingest, detect;
  std::set<unsigned> seen;
  unsigned count = 0;
  std::map<std::string, std::string> owner;  // recording -> shard
  for (const auto& path : shards) {
    readers.push_back(std::make_unique<StudyStoreReader>(path));
    const StudyStoreReader& r = *readers.back();
    const auto in = r.stage_record(Stage::ingest), de = r.stage_record(Stage::detect);
    if (!in || !de || in->state != StageState::current || de->state != StageState::current) {
      throw InputError({path, 0, ""}, "is not a finished shard: it needs current ingest and detect results (gazemill run --shard K/N)");
    }
    if (!ingest) {
      ingest = in;
      detect = de;
    } else if (in->settings_json != ingest->settings_json || de->settings_json != detect->settings_json) {
      throw InputError({path, 0, ""}, "was made with other [input], [trials] or [detection] settings than " + shards.front() +
                                          "; every shard of a study runs the same protocol");
    } else if (de->protocol_text != detect->protocol_text) {
      // The merge cleans and measures with the shards' protocol: it must be one.
      throw InputError({path, 0, ""}, "was made with another protocol text than " + shards.front() + " (" + de->protocol_path + " against " +
                                          detect->protocol_path + "); every shard of a study runs the same protocol, and the merge "
                                          "cleans and measures with it: run the shards again from one protocol file");
    }
    const std::string shard = r.provenance().shard;
    const auto slash = shard.find('/');
    if (slash == std::string::npos) throw InputError({path, 0, "/provenance"}, "is a whole study's store, not a shard");
    const unsigned k = static_cast<unsigned>(std::stoul(shard.substr(0, slash)));
    const unsigned n = static_cast<unsigned>(std::stoul(shard.substr(slash + 1)));
    if (count && n != count) throw InputError({path, 0, "/provenance"}, "is shard " + shard + " but the others are of " + std::to_string(count));
    count = n;
    if (!seen.insert(k).second) throw InputError({path, 0, "/provenance"}, "is shard " + shard + " a second time");
    for (const auto& id : r.recording_ids()) {
      if (const auto [it, fresh] = owner.emplace(id, path); !fresh) {
        throw InputError({path, 0, "/recordings/" + id}, "recording " + id + " is in " + it->second + " too");
      }
    }
  }
  // Every shard saw the same study: shards run when the input folder had
  // other files would drop recordings no shard was given (found in a
  // newcomer's trial: two participants went missing, exit 0).
  std::optional<std::vector<std::string>> study;
  for (std::size_t s = 0; s < readers.size(); ++s) {
    const std::vector<std::string> saw = readers[s]->provenance().study_recordings;
    if (saw.empty()) continue;  // a shard from before this was kept
    if (!study) {
      study = saw;
      continue;
    }
    if (saw != *study) {
      std::vector<std::string> only_one;
      std::set_symmetric_difference(saw.begin(), saw.end(), study->begin(), study->end(), std::back_inserter(only_one));
      std::string names;
      for (std::size_t i = 0; i < only_one.size() && i < 5; ++i) names += (names.empty() ? "" : ", ") + only_one[i];
      throw InputError({shards[s], 0, "/provenance"}, "saw other input files than " + shards.front() + " (" + std::to_string(saw.size()) + " recordings against " +
                                                          std::to_string(study->size()) + "; not in both: " + names +
                                                          (only_one.size() > 5 ? ", ..." : "") + "): run every shard again on the same inputs");
    }
  }
  if (study && seen.size() == count) {  // (a missing shard is named below)
    std::string lost;
    std::size_t lost_count = 0;
    for (const auto& id : *study) {
      if (owner.count(id)) continue;
      if (lost_count++ < 5) lost += (lost.empty() ? "" : ", ") + id;
    }
    if (lost_count) {
      throw InputError({shards.front(), 0, "/provenance"}, std::to_string(lost_count) + " recording(s) of the study are in no shard (" + lost +
                                                                (lost_count > 5 ? ", ..." : "") + "): run the shards again");
    }
  }
  if (seen.size() != count) {
    std::string missing;
    for (unsigned k = 0; k < count; ++k) {
      if (!seen.count(k)) missing += (missing.empty() ? "" : ", ") + std::to_string(k);
    }
    throw InputError({shards.front(), 0, ""}, "the study has " + std::to_string(count) + " shards; missing: " + missing);
  }
  const Protocol protocol = parse_protocol_text(detect->protocol_text, detect->protocol_path);
  if (const auto now = protocol_file_text(detect->protocol_path); now && *now != detect->protocol_text) {
    spdlog::warn("{} has changed since the shards ran; the merge cleans and measures with the text the shards ran with (run the shards "
                 "again to use the edited one)",
                 detect->protocol_path);
  }
  std::error_code ec;
  fs::create_directories(out_folder, ec);
  if (ec) throw InputError({out_folder, 0, ""}, "cannot create the output folder: " + ec.message());
  const std::string store = (fs::path(out_folder) / ((protocol.study_name.empty() ? "study" : protocol.study_name) + ".gzm.h5")).string();
  {
    WriteLock lock(store);
    StudyStoreWriter w(store);
    Provenance prov = readers.front()->provenance();
    prov.shard.clear();
    prov.study_recordings.clear();
    prov.inputs.clear();
    prov.repairs.clear();
    std::map<std::string, std::string> ingest_keys, detect_keys;
    for (std::size_t s = 0; s < readers.size(); ++s) {
      const StudyStoreReader& r = *readers[s];
      const Provenance p = r.provenance();
      prov.inputs.insert(prov.inputs.end(), p.inputs.begin(), p.inputs.end());
      prov.repairs.insert(prov.repairs.end(), p.repairs.begin(), p.repairs.end());
      for (const auto& id : r.recording_ids()) {
        w.add_linked_recording(shards[s], id);
        ingest_keys[id] = r.recording_attribute(id, "ingest_key");
        detect_keys[id] = r.events_key(id);
      }
    }
    std::sort(prov.inputs.begin(), prov.inputs.end(), [](auto& a, auto& b) { return std::tie(a.recording_id, a.path) < std::tie(b.recording_id, b.path); });
    std::sort(prov.repairs.begin(), prov.repairs.end(), [](auto& a, auto& b) { return std::tie(a.recording_id, a.kind) < std::tie(b.recording_id, b.kind); });
    w.write_provenance(prov);
    StageRecord in = *ingest, de = *detect;
    in.key = study_ingest_key(ingest_keys);
    de.key = study_detect_key(in.key, detect_keys);
    de.upstream_key = in.key;
    w.write_stage_record(in);
    w.write_stage_record(de);
    w.commit();
  }
  spdlog::info("joined {} recordings from {} shards into {}", owner.size(), shards.size(), store);
  // The study-level stages on the whole study.
  StudyRunReport report;
  for (Stage s : {Stage::clean, Stage::align, Stage::measure}) {
    if (s != Stage::clean && !protocol.regions.present()) break;
    StudyRunOptions o;
    o.store_path = store;
    o.only = s;
    StudyRunReport r = run_study(protocol, o);
    report.stages[s] = r.stages[s];
    if (r.audit) report.audit = r.audit;
    if (!r.rows.empty()) {
      report.rows = std::move(r.rows);
      report.placement = std::move(r.placement);
    }
  }
  report.recordings = owner.size();
  report.store_path = store;
  report.tables_folder = (fs::path(out_folder) / "tables").string();
  report.tables = write_study_tables(store, report.tables_folder, protocol, &report);
  return report;
}

}  // namespace gazemill
