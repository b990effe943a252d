#include "detectors/fixation_import.h"

#include <algorithm>

#include "detectors/visual_angle.h"

namespace gazemill {

FixationImport import_fixations(const std::vector<Trial>& trials, const std::vector<FixationEvent>& fixations,
                                const ScreenGeometry& screen) {
  FixationImport out;
  const VisualAngle angle(screen);
  // Trials of a table may overlap or come out of time order: a fixation goes
  // to the first trial (in trial order) whose span holds its start.
  std::vector<bool> taken(fixations.size(), false);
  for (const Trial& t : trials) {
    TrialDetection td;
    td.trial = t.id;
    bool eye_known = false;
    auto it = std::lower_bound(fixations.begin(), fixations.end(), t.start_us,
                               [](const FixationEvent& f, Microseconds time) { return f.start_us < time; });
    for (; it != fixations.end() && it->start_us <= t.end_us; ++it) {
      const auto k = static_cast<std::size_t>(it - fixations.begin());
      if (taken[k]) continue;
      taken[k] = true;
      FixationEvent f = *it;
      f.trial = t.id;
      f.x_deg = angle.x_deg(f.x_px);
      f.y_deg = angle.y_deg(f.y_px);
      if (!eye_known) {
        td.eye = f.eye;
        eye_known = true;
      }
      out.events.fixations.push_back(std::move(f));
    }
    out.events.trials.push_back(std::move(td));
  }
  out.outside_trials = static_cast<std::size_t>(std::count(taken.begin(), taken.end(), false));
  return out;
}

}  // namespace gazemill
