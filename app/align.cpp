#include "app/align.h"

#include <cmath>
#include <limits>

#include "alignment/drift_registry.h"
#include "measures/region_mapper.h"
#include "pipeline/input_error.h"

namespace gazemill {

namespace {

DriftText text_of(const RegionLayout& layout, const AlignmentSpec& spec) {
  DriftText t;
  for (const auto& l : layout.lines) t.line_y_px.push_back(l.centre_px());
  t.line_height_px = layout.lines.size() > 1 ? layout.lines[1].centre_px() - layout.lines[0].centre_px()
                                             : layout.lines.front().bottom_px - layout.lines.front().top_px;
  t.font_height_px = spec.font_height_px > 0 ? spec.font_height_px : 0.5 * t.line_height_px;
  t.word_x_px = layout.word_centre_x_px;
  for (auto& w : t.word_x_px) {
    if (w.empty()) w.push_back(0.5 * (layout.lines.front().top_px + layout.lines.front().bottom_px));  // a line without words
  }
  return t;
}

}  // namespace

std::vector<RecordingAlignment> align_study(const Protocol& protocol, const RegionCatalogue& regions,
                                            const std::vector<CleanedRecording>& recordings) {
  const AlignmentSpec& spec = protocol.alignment;
  const auto corrector = spec.members.empty() ? make_drift_corrector(spec.method, spec.parameters)
                                              : make_majority_corrector(spec.members, spec.parameters);
  const bool attach = spec.method == "attach";
  // Which fixations are on the text at all: within the protocol's reach of a
  // line (max_line_distance_px, default one line height), whatever the method.
  RegionSpec reach = protocol.regions;
  reach.off_line_nearest = true;
  std::vector<RecordingAlignment> out;
  for (const CleanedRecording& rec : recordings) {
    RecordingAlignment a;
    a.recording = rec.meta.id;
    std::size_t k = 0;
    for (const Trial& t : rec.meta.trials) {
      const std::size_t begin = k;
      while (k < rec.kept.size() && rec.kept[k].fixation.trial == t.id) ++k;
      const auto verdict = rec.trial_kept.find(t.id);
      if (verdict != rec.trial_kept.end() && !verdict->second) continue;
      const std::string& item = t.variable(protocol.design.item_variable);
      const RegionLayout* layout = regions.find(item, t.variables);
      if (!layout) {
        throw InputError({protocol.path, 0, "regions"}, "no regions for " + regions.describe(item, t.variables) + " (recording " +
                                                             rec.meta.id + ", trial " + t.id + ")");
      }
      DriftInput input;
      input.text = text_of(*layout, spec);
      std::vector<std::uint32_t> ids;
      for (std::size_t i = begin; i < k; ++i) {
        const CleanFixation& f = rec.kept[i];
        // attach keeps the protocol's own rule for fixations between lines (off_line).
        const RegionSpec& rule = attach ? protocol.regions : reach;
        if (place_fixation(*layout, f.fixation.x_px, f.fixation.y_px, rule).line < 0) {
          a.fixations[f.id] = {-1, std::numeric_limits<double>::quiet_NaN()};
          continue;
        }
        input.fixations.push_back({f.fixation.x_px, f.fixation.y_px, f.duration_ms});
        ids.push_back(f.id);
      }
      const DriftOutput result = corrector->correct(input);
      for (std::size_t i = 0; i < ids.size(); ++i) a.fixations[ids[i]] = {result.line[i], result.corrected_y_px[i]};
      const auto c = result.fit.find("confidence");
      const double confidence = c == result.fit.end() ? 1.0 : c->second;
      a.trials.push_back({t.id, spec.method, confidence, confidence < spec.min_confidence, result.fit});
    }
    out.push_back(std::move(a));
  }
  return out;
}

}  // namespace gazemill
