#include "app/verify.h"

#include <filesystem>

#include "app/protocol_parser.h"
#include "app/study_run.h"
#include "app/temp_folder.h"
#include "io/region_files.h"
#include "io/sha256.h"
#include "io/store_compare.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

bool verify_store(const std::string& store_path, std::ostream& out) {
  StudyStoreReader store(store_path);
  const Provenance prov = store.provenance();
  bool ok = true;
  for (const auto& in : prov.inputs) {
    if (!fs::exists(in.path)) {
      out << "input missing: " << in.path << "\n";
      ok = false;
      continue;
    }
    const std::string digest = sha256_file(in.path);
    if (digest != in.sha256 || fs::file_size(in.path) != in.size_bytes) {
      out << "input changed: " << in.path << " (sha256 " << digest.substr(0, 16) << "… recorded " << in.sha256.substr(0, 16) << "…)\n";
      ok = false;
    }
  }
  if (ok) out << "inputs: " << prov.inputs.size() << " files match their recorded size and SHA-256\n";

  // Each stage again, with the protocol it ran with (its relative file
  // names resolve from that protocol's folder), into a scratch store.
  std::vector<StageRecord> stages;
  for (Stage s : kStages) {
    const auto r = store.stage_record(s);
    if (!r || r->state != StageState::current) break;
    stages.push_back(*r);
  }
  if (stages.empty()) {
    out << "the store has no current stage to re-run\nNOT verified\n";
    return false;
  }
  const TempFolder scratch("gazemill-verify-");
  const std::string again = (scratch.path() / "again.gzm.h5").string();
  try {
    for (const auto& r : stages) {
      const Protocol protocol = parse_protocol_text(r.protocol_text, r.protocol_path);
      // Imported fixation lists: the ingest re-run imports the events again.
      if (r.stage == Stage::detect && protocol.input.format == InputFormat::fixations) continue;
      StudyRunOptions opt;
      opt.store_path = again;
      opt.only = r.stage;
      if (const auto slash = prov.shard.find('/'); slash != std::string::npos) {  // a shard: its own part of the study again
        opt.shard_index = static_cast<unsigned>(std::stoul(prov.shard.substr(0, slash)));
        opt.shard_count = static_cast<unsigned>(std::stoul(prov.shard.substr(slash + 1)));
      }
      run_study(protocol, opt);
    }
  } catch (const InputError& e) {
    out << "re-run failed: " << e.what() << "\n";
    return false;
  }
  auto diffs = compare_store_datasets(store_path, again);
  // A store whose detect ran before sample digests were kept (format 2) has
  // none; the re-run makes them. They are the report's working copy of the
  // samples, not a result, so their absence is no difference.
  std::size_t digests_absent = 0;
  std::erase_if(diffs, [&](const DatasetDifference& d) {
    const bool absent_digest = d.what == "extra" && d.path.find("/events/sample_digest/") != std::string::npos;
    digests_absent += absent_digest;
    return absent_digest;
  });
  if (digests_absent) out << "the store keeps no sample digests for the report (made before they were kept); not compared\n";
  for (const auto& d : diffs) out << "dataset differs (" << d.what << "): /" << d.path << "\n";
  if (!diffs.empty()) {
    // A stage whose re-run has another key read other inputs than recorded:
    // the region file, besides the recordings, is read by clean onward.
    StudyStoreReader fresh(again);
    for (const auto& r : stages) {
      const auto now = fresh.stage_record(r.stage);
      if (!now || now->key == r.key) continue;
      out << "stage " << to_string(r.stage) << " made from other inputs than recorded";
      const Protocol protocol = parse_protocol_text(r.protocol_text, r.protocol_path);
      const std::string regions = regions_file(protocol);
      if (!regions.empty() && r.stage != Stage::ingest && r.stage != Stage::detect) out << " (has " << regions << " changed since the run?)";
      out << "\n";
      break;  // the stages after it differ because it does
    }
  }
  if (diffs.empty()) out << "datasets: every dataset matches a fresh run of the stored protocols (" << stages.size() << " stages)\n";
  ok = ok && diffs.empty();
  out << (ok ? "verified\n" : "NOT verified\n");
  return ok;
}

}  // namespace gazemill
