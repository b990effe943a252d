#include "app/measure.h"

#include <nlohmann/json.hpp>
#include <spdlog/spdlog.h>

#include <filesystem>

#include "app/ingest.h"
#include "gazemill/version.h"
#include "io/cleaning_io.h"
#include "io/measures_io.h"
#include "io/region_files.h"
#include "io/sha256.h"
#include "io/study_store.h"
#include "measures/measure_aggregates.h"
#include "measures/reading_measures.h"
#include "measures/region_mapper.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

std::vector<MeasureRow> measure_rows(const StudyStoreReader& store, const RegionCatalogue& regions, const RegionSpec& spec) {
  std::vector<MeasureRow> rows;
  bool warned = false;
  for (const auto& id : store.recording_ids()) {
    const Recording rec = store.read_recording(id, false);
    std::vector<CleanFixation> fixations;
    std::map<std::string, bool> kept;
    if (store.exists("recordings/" + id + "/clean")) {
      fixations = read_clean_fixations(store, id);
      kept = read_clean_trial_verdicts(store, id);
    } else {
      if (!store.has_events(id)) throw InputError({store.path(), 0, "recordings/" + id + "/events"}, "no fixations; run gazemill detect first");
      if (!warned) spdlog::warn("{}: not cleaned; measuring the detected fixations", store.path());
      warned = true;
      for (const auto& f : store.read_events(id).fixations) {
        CleanFixation c;
        c.fixation = f;
        c.duration_ms = f.duration_ms();
        fixations.push_back(c);
      }
    }
    std::size_t k = 0;
    for (const Trial& t : rec.trials) {
      std::vector<const CleanFixation*> trial_fix;
      for (; k < fixations.size() && fixations[k].fixation.trial == t.id; ++k) trial_fix.push_back(&fixations[k]);
      if (!kept.empty() && !kept[t.id]) continue;
      const RegionLayout* layout = regions.find(t.item, t.condition);
      if (!layout) {
        throw InputError({store.path(), 0, "regions"}, "no regions for item " + t.item + " in condition " + t.condition +
                                                           " (recording " + id + ", trial " + t.id + ")");
      }
      std::vector<PlacedFixation> placed;
      for (const CleanFixation* c : trial_fix) {
        const FixationPlace where = place_fixation(*layout, c->fixation.x_px, c->fixation.y_px, spec);
        placed.push_back({c->duration_ms, c->fixation.x_px, c->fixation.y_px, c->fixation.x_deg, c->fixation.y_deg, where.line,
                          where.region, where.landing_chars});
      }
      const int region_count = static_cast<int>(layout->regions.size());
      const auto m = reading_measures(placed, region_count, layout->char_width_px);
      auto neighbour = [&](int r) -> std::optional<NeighbourMeasures> {
        if (r < 0 || r >= region_count) return std::nullopt;
        const RegionInfo& info = layout->regions[static_cast<std::size_t>(r)];
        const RegionMeasures& x = m[static_cast<std::size_t>(r)];
        return NeighbourMeasures{r + 1, info.label, info.letters, x.skipped, x.first_fixation_ms, x.gaze_duration_ms, x.total_time_ms};
      };
      for (int r = 0; r < region_count; ++r) {
        const RegionInfo& info = layout->regions[static_cast<std::size_t>(r)];
        const RegionMeasures& x = m[static_cast<std::size_t>(r)];
        MeasureRow row;
        row.participant = rec.participant;
        row.session = rec.session;
        row.recording = id;
        row.trial = t.id;
        row.item = t.item;
        row.condition = t.condition;
        row.variables = t.variables;
        row.region = r + 1;
        row.region_label = info.label;
        row.region_role = info.role;
        row.region_letters = info.letters;
        row.region_words = info.words;
        row.region_line = info.line + 1;
        row.region_last_line = info.last_line + 1;
        row.fixated = x.fixated;
        row.skipped = x.skipped;
        row.regression_in = x.regression_in;
        row.regression_out = x.regression_out;
        row.first_fixation_ms = x.first_fixation_ms;
        row.single_fixation_ms = x.single_fixation_ms;
        row.gaze_duration_ms = x.gaze_duration_ms;
        row.go_past_ms = x.go_past_ms;
        row.selective_go_past_ms = x.selective_go_past_ms;
        row.total_time_ms = x.total_time_ms;
        row.rereading_ms = x.rereading_ms;
        row.second_pass_ms = x.second_pass_ms;
        row.first_pass_fixations = x.first_pass_fixations;
        row.total_fixations = x.total_fixations;
        row.landing_chars = x.landing_chars;
        row.incoming_saccade_chars = x.incoming_saccade_chars;
        row.incoming_saccade_deg = x.incoming_saccade_deg;
        row.previous = neighbour(r - 1);
        row.next = neighbour(r + 1);
        rows.push_back(std::move(row));
      }
    }
  }
  return rows;
}

std::vector<MeasureRow> measure_study(const Protocol& protocol, const std::string& store_path, const std::string& out_folder) {
  const RegionCatalogue regions = load_regions(protocol);
  std::vector<MeasureRow> rows;
  {
    StudyStoreReader store(store_path);
    rows = measure_rows(store, regions, protocol.regions);
  }
  const auto by_region = aggregate_by_region(rows);
  const auto by_role = aggregate_by_role(rows);
  const auto by_participant = aggregate_by_participant(rows);
  auto out = StudyStoreWriter::derive(store_path, {"/measures"}, "measure");
  write_measures(*out, rows, by_region, by_role, by_participant);
  nlohmann::json settings = {{"regions", protocol.regions.present() ? (protocol.regions.boxes_file.empty() ? protocol.regions.items_file
                                                                                                         : protocol.regions.boxes_file)
                                                                    : ""},
                             {"off_line", protocol.regions.off_line_nearest ? "nearest" : "exclude"},
                             {"margin", protocol.regions.margin_nearest ? "nearest" : "exclude"}};
  out->write_stage_provenance("measure", {kVersion, protocol.text, sha256_hex(protocol.text), utc_now_iso8601(), settings.dump(),
                                         std::filesystem::absolute(protocol.path).lexically_normal().string()});
  out->commit();
  fs::create_directories(out_folder);
  const fs::path o(out_folder);
  write_file_atomically((o / "measures.tsv").string(), measures_long_tsv(rows));
  write_file_atomically((o / "measures_wide.tsv").string(), measures_wide_tsv(rows));
  write_file_atomically((o / "measures_by_region.tsv").string(), aggregates_tsv(by_region, "region"));
  write_file_atomically((o / "measures_by_role.tsv").string(), aggregates_tsv(by_role, "region_role"));
  write_file_atomically((o / "measures_by_participant.tsv").string(), aggregates_tsv(by_participant, "participant"));
  return rows;
}

}  // namespace gazemill
