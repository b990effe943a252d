#include "app/align.h"

#include <cmath>
#include <limits>

#include "measures/region_mapper.h"
#include "pipeline/input_error.h"

namespace gazemill {

std::vector<RecordingAlignment> align_study(const Protocol& protocol, const RegionCatalogue& regions,
                                            const std::vector<CleanedRecording>& recordings) {
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
      // Attach: the nearest line within the protocol's reach (Carr et al. 2022's baseline).
      std::size_t near = 0, assigned = 0;
      for (std::size_t i = begin; i < k; ++i) {
        const CleanFixation& f = rec.kept[i];
        const FixationPlace where = place_fixation(*layout, f.fixation.x_px, f.fixation.y_px, protocol.regions);
        LineAssignment line;
        line.line = where.line;
        if (where.line >= 0) {
          const LineInfo& l = layout->lines[static_cast<std::size_t>(where.line)];
          line.corrected_y_px = l.centre_px();
          ++assigned;
          near += std::abs(f.fixation.y_px - l.centre_px()) <= 0.5 * (l.bottom_px - l.top_px);
        } else {
          line.corrected_y_px = std::numeric_limits<double>::quiet_NaN();
        }
        a.fixations[f.id] = line;
      }
      // The share of assigned fixations inside their line's band.
      const double confidence = assigned ? static_cast<double>(near) / static_cast<double>(assigned) : 1.0;
      a.trials.push_back({t.id, "attach", confidence, false});
    }
    out.push_back(std::move(a));
  }
  return out;
}

}  // namespace gazemill
