#include "app/measure.h"

#include <algorithm>
#include <map>

#include "app/parallel_recordings.h"
#include "measures/reading_measures.h"
#include "measures/region_mapper.h"
#include "pipeline/design.h"
#include "pipeline/input_error.h"
#include "pipeline/regions.h"

namespace gazemill {

namespace {

// One recording's rows, appended to `rows`; its placements counted in `placement`.
void measure_recording(const CleanedRecording& cleaned, const std::map<std::string, const RecordingAlignment*>& aligned,
                       const RegionCatalogue& regions, const RegionSpec& spec, const DesignSpec& design, std::vector<MeasureRow>& rows,
                       PlacementCounts* placement) {
  {
    const Recording& rec = cleaned.meta;
    const std::string& id = rec.id;
    const std::vector<CleanFixation>& fixations = cleaned.kept;
    const std::map<std::string, bool>& kept = cleaned.trial_kept;
    const auto a = aligned.find(id);
    if (a == aligned.end()) throw InputError({"", 0, "align"}, "recording " + id + " has no line assignments");
    std::size_t k = 0;
    for (const Trial& t : rec.trials) {
      std::vector<const CleanFixation*> trial_fix;
      for (; k < fixations.size() && fixations[k].fixation.trial == t.id; ++k) trial_fix.push_back(&fixations[k]);
      if (const auto v = kept.find(t.id); v != kept.end() && !v->second) continue;
      // A reviewer may have left the trial out after looking at its lines.
      if (std::any_of(a->second->trials.begin(), a->second->trials.end(),
                      [&](const AlignedTrial& x) { return x.trial == t.id && x.excluded; })) {
        continue;
      }
      const std::string& item = t.variable(design.item_variable);
      const std::string cell = cell_key(design_levels(design, t.variables));
      const RegionLayout* layout = regions.find(item, t.variables);
      if (!layout) {
        throw InputError({regions.source(), 0, "item"}, "no regions for " + regions.describe(item, t.variables) + " (recording " + id + ", trial " +
                                                 t.id + ")");
      }
      std::vector<PlacedFixation> placed;
      for (const CleanFixation* c : trial_fix) {
        // On the line the align stage chose: placed at its centre, the region is the one under x.
        const auto line = a->second->fixations.find(c->id);
        FixationPlace where;
        if (line != a->second->fixations.end() && line->second.line >= 0) {
          where = place_fixation(*layout, c->fixation.x_px, line->second.corrected_y_px, spec);
        }
        placed.push_back({c->duration_ms, c->fixation.x_px, c->fixation.y_px, c->fixation.x_deg, c->fixation.y_deg, where.line,
                          where.region, where.landing_chars});
        if (placement) {
          FixationPlacement& p = (*placement)[{rec.participant, cell}];
          if (where.region >= 0) ++p.on_region;
          else if (where.line >= 0) ++p.beside_text;
          else ++p.off_lines;
        }
      }
      const int region_count = static_cast<int>(layout->regions.size());
      const auto m = reading_measures(placed, region_count, layout->char_width_px);
      auto neighbour = [&](int r) -> std::optional<NeighbourMeasures> {
        if (r < 0 || r >= region_count) return std::nullopt;
        const RegionInfo& info = layout->regions[static_cast<std::size_t>(r)];
        const RegionMeasures& x = m[static_cast<std::size_t>(r)];
        return NeighbourMeasures{r + 1, info.label, info.letters, x.skipped, x.first_fixation_ms, x.gaze_duration_ms, x.total_time_ms};
      };
      const auto variables = std::make_shared<const std::map<std::string, std::string>>(t.variables);
      for (int r = 0; r < region_count; ++r) {
        const RegionInfo& info = layout->regions[static_cast<std::size_t>(r)];
        const RegionMeasures& x = m[static_cast<std::size_t>(r)];
        MeasureRow row;
        row.participant = rec.participant;
        row.session = rec.session;
        row.recording = id;
        row.trial = t.id;
        row.item = item;
        row.cell = cell;
        row.variables = variables;
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
        row.before = neighbour(r - 1);
        row.after = neighbour(r + 1);
        rows.push_back(std::move(row));
      }
    }
  }
}

}  // namespace

std::vector<MeasureRow> measure_rows(const std::vector<CleanedRecording>& recordings, const std::vector<RecordingAlignment>& alignment,
                                     const RegionCatalogue& regions, const RegionSpec& spec, const DesignSpec& design,
                                     PlacementCounts* placement, unsigned threads) {
  std::map<std::string, const RecordingAlignment*> aligned;
  for (const auto& a : alignment) aligned[a.recording] = &a;
  // A recording per thread, joined in recording order: the same rows for any number of threads.
  std::vector<std::vector<MeasureRow>> rows(recordings.size());
  std::vector<PlacementCounts> placed(recordings.size());
  for_each_recording(recordings.size(), threads, [&](std::size_t k) {
    measure_recording(recordings[k], aligned, regions, spec, design, rows[k], placement ? &placed[k] : nullptr);
  });
  std::size_t total = 0;
  for (const auto& r : rows) total += r.size();
  std::vector<MeasureRow> out;
  out.reserve(total);
  for (auto& r : rows) out.insert(out.end(), std::make_move_iterator(r.begin()), std::make_move_iterator(r.end()));
  if (placement) {
    for (const auto& p : placed) {
      for (const auto& [key, c] : p) {
        FixationPlacement& sum = (*placement)[key];
        sum.on_region += c.on_region;
        sum.beside_text += c.beside_text;
        sum.off_lines += c.off_lines;
      }
    }
  }
  return out;
}

}  // namespace gazemill
