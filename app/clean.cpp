#include "app/clean.h"

#include <filesystem>
#include <nlohmann/json.hpp>
#include <map>

#include "app/ingest.h"
#include "detectors/recording_detection.h"
#include "filters/cleaning_engine.h"
#include "gazemill/version.h"
#include "io/cleaning_io.h"
#include "io/region_files.h"
#include "measures/region_mapper.h"
#include "io/sha256.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

CleaningState cleaning_state_from_store(const StudyStoreReader& store) {
  CleaningState state;
  std::map<std::string, std::size_t> participant_index;
  std::uint32_t next_fixation = 0, next_trial = 0;
  bool first = true;
  for (const auto& id : store.recording_ids()) {
    if (!store.has_events(id)) {
      throw InputError({store.path(), 0, "recordings/" + id + "/events"}, "no detected events; run gazemill detect first");
    }
    const Recording rec = store.read_recording(id, true);
    const DetectedEvents ev = store.read_events(id);
    const std::vector<SampleLabel> labels = store.read_sample_labels(id);
    if (first) {
      state.screen = rec.screen;
      first = false;
    }
    auto [it, added] = participant_index.emplace(rec.participant, state.participants.size());
    if (added) {
      CleanParticipant p;
      p.id = static_cast<std::uint32_t>(state.participants.size());
      p.participant = rec.participant;
      state.participants.push_back(p);
    }
    CleanParticipant& participant = state.participants[it->second];
    std::size_t fx = 0, bl = 0;
    for (const Trial& t : rec.trials) {
      CleanTrial ct;
      ct.id = next_trial++;
      ct.recording = id;
      ct.participant = rec.participant;
      ct.trial = t.id;
      ct.item = t.item;
      ct.condition = t.condition;
      ct.variables = t.variables;
      ct.markers = t.markers;
      ct.start_us = t.start_us;
      ct.end_us = t.end_us;
      const auto [a, b] = sample_range(rec.samples.time_us, t.start_us, t.end_us);
      ct.samples = b - a;
      for (std::size_t i = a; i < b; ++i) {
        const bool any = (rec.samples.has_left && rec.samples.left.valid[i]) || (rec.samples.has_right && rec.samples.right.valid[i]);
        ct.missing_samples += !any;
        if (labels[i] == SampleLabel::loss) {
          if (i > a && labels[i - 1] == SampleLabel::loss) ct.losses.back().second = rec.samples.time_us[i];
          else ct.losses.emplace_back(rec.samples.time_us[i], rec.samples.time_us[i]);
        }
      }
      // Events are stored trial by trial in trial order.
      for (; fx < ev.fixations.size() && ev.fixations[fx].trial == t.id; ++fx) {
        CleanFixation f;
        f.id = next_fixation++;
        f.fixation = ev.fixations[fx];
        f.duration_ms = f.fixation.duration_ms();
        ct.fixations.push_back(f);
      }
      for (; bl < ev.blinks.size() && ev.blinks[bl].trial == t.id; ++bl) ct.blinks.push_back(ev.blinks[bl]);
      participant.trials.push_back(std::move(ct));
    }
  }
  return state;
}

void map_regions(CleaningState& state, const RegionCatalogue& regions, const RegionSpec& spec) {
  for (auto& p : state.participants) {
    for (auto& t : p.trials) {
      const RegionLayout* layout = regions.find(t.item, t.condition);
      if (!layout) {
        throw InputError({"", 0, "regions"}, "no regions for item " + t.item + " in condition " + t.condition + " (participant " +
                                                 t.participant + ", trial " + t.trial + ")");
      }
      for (auto& f : t.fixations) f.region = place_fixation(*layout, f.fixation.x_px, f.fixation.y_px, spec).region;
      for (const auto& r : layout->regions) {
        if (!r.role.empty()) t.region_roles.emplace(r.role, r.id);
      }
      t.regions_mapped = true;
    }
  }
}

AuditReport clean_study(const Protocol& protocol, const std::string& store_path, const std::string& report_folder) {
  if (protocol.cleaning.empty()) {
    throw InputError({protocol.path, 0, "cleaning"}, "the protocol has no [[cleaning]] rules");
  }
  CleaningOutcome outcome;
  {
    StudyStoreReader source(store_path);
    CleaningState input = cleaning_state_from_store(source);
    if (protocol.regions.present()) map_regions(input, load_regions(protocol), protocol.regions);
    try {
      outcome = run_cleaning(input, protocol.cleaning);
    } catch (const std::invalid_argument& e) {
      throw InputError({protocol.path, 0, "cleaning"}, e.what());
    }
  }
  auto out = StudyStoreWriter::derive(store_path, {"clean", "/audit"}, "clean");
  write_cleaning(*out, outcome);
  write_audit(*out, outcome.report);
  nlohmann::json settings = nlohmann::json::array();
  for (const auto& r : protocol.cleaning) {
    settings.push_back({{"name", r.name}, {"kind", r.kind}, {"numbers", r.numbers}, {"texts", r.texts}});
  }
  out->write_stage_provenance("clean", {kVersion, protocol.text, sha256_hex(protocol.text), utc_now_iso8601(), settings.dump(),
                                         std::filesystem::absolute(protocol.path).lexically_normal().string()});
  out->commit();
  fs::create_directories(report_folder);
  write_audit_tsv(outcome.report, (fs::path(report_folder) / "audit.tsv").string(),
                  (fs::path(report_folder) / "audit_totals.tsv").string());
  write_audit_json(outcome.report, (fs::path(report_folder) / "audit.json").string());
  return outcome.report;
}

}  // namespace gazemill
