#include "app/verify.h"

#include <filesystem>

#include "app/clean.h"
#include "app/detect.h"
#include "app/ingest.h"
#include "app/measure.h"
#include "app/protocol_parser.h"
#include "app/temp_folder.h"
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

  const TempFolder scratch("gazemill-verify-");
  const fs::path& tmp = scratch.path();
  const std::string again = (tmp / "again.gzm.h5").string();
  try {
    ingest_study(parse_protocol_text(prov.protocol_text, prov.protocol_path), again, {});
    // Each stage's own protocol text, read as if from where it was (for its relative file names).
    auto stage_protocol = [&](const char* stage) {
      const StageProvenance s = store.stage_provenance(stage);
      return parse_protocol_text(s.protocol_text, s.protocol_path);
    };
    if (store.exists("provenance/stages/detect")) detect_study(stage_protocol("detect"), again);
    if (store.exists("provenance/stages/clean")) clean_study(stage_protocol("clean"), again, tmp.string());
    if (store.exists("provenance/stages/measure")) measure_study(stage_protocol("measure"), again, tmp.string());
  } catch (const InputError& e) {
    out << "re-run failed: " << e.what() << "\n";
    return false;
  }
  const auto diffs = compare_store_datasets(store_path, again);
  for (const auto& d : diffs) out << "dataset differs (" << d.what << "): /" << d.path << "\n";
  if (diffs.empty()) out << "datasets: every dataset matches a fresh run of the stored protocol\n";
  ok = ok && diffs.empty();
  out << (ok ? "verified\n" : "NOT verified\n");
  return ok;
}

}  // namespace gazemill
