#pragma once
// Saccade onsets and offsets placed beyond a method's own detection
// criterion, and glissades (post-saccadic oscillations) after the offsets,
// by the rules of Nystrom & Holmqvist (2010, Behavior Research Methods
// 42(1), 188-204; the rules as recalled in methods.md section 3, from
// memory): from each run of samples the method found fast enough, walk
// back while the velocity stays at or above a noise-based onset threshold
// (the paper walks on to the local minimum below it; see the .cpp for why
// we stop at the crossing), and forward to the first local minimum below an
// offset threshold that mixes the onset threshold with the noise just
// before the saccade; a velocity bump above the offset threshold soon after
// the offset is a glissade. Nystrom & Holmqvist's detector is built on it,
// and I-VT and Engbert & Kliegl can use it to refine their saccades and
// label glissades.

#include <cstddef>
#include <vector>

#include "detectors/gaze_trace.h"
#include "pipeline/events.h"

namespace gazemill {

/// Samples first..last (inclusive) that a method found fast enough to be a saccade.
struct SaccadeCore {
  std::size_t first = 0, last = 0;
};

struct SaccadeRefinementParams {
  double onset_threshold_deg_s = 0;   // a saccade starts after the local minimum below this
  // Offset threshold = w * onset threshold + (1 - w) * the local noise
  // threshold (mean + 3 SD of the speed over local_noise_window_ms before
  // the saccade's onset).
  double offset_onset_weight = 0.7;
  double local_noise_window_ms = 40.0;
  double max_glissade_ms = 40.0;      // 0 = no glissades
  double min_saccade_ms = 0.0;        // shorter saccades are not labelled (0 = all)
  // false: the method's own saccades (the cores) are kept as they are and
  // only glissades are added after them: the offset walk still finds where
  // the saccade comes to rest, and when a bump above the offset threshold
  // follows within max_glissade_ms, every sample from the core's end to the
  // bump's closing minimum is a glissade. Without a bump nothing changes.
  bool walk_boundaries = true;
};

/// Runs of usable samples faster than `threshold_deg_s`, merged where they touch.
std::vector<SaccadeCore> cores_above(const std::vector<double>& speed, const std::vector<bool>& usable, double threshold_deg_s);

/// Labels saccade and pso samples in `out` (sized like `speed`, other
/// elsewhere) from `cores` in time order. A core that falls inside the
/// saccade or glissade of the one before it belongs to that saccade. The
/// sample before the onset (the first below the onset threshold) and the
/// local minima that end a saccade or a glissade are at rest and stay out
/// of them. Walks stop at unusable samples and at the previous saccade.
void refine_saccades(const GazeTrace& trace, const std::vector<double>& speed, const std::vector<bool>& usable,
                     const std::vector<SaccadeCore>& cores, const SaccadeRefinementParams& params,
                     std::vector<SampleLabel>& out);

/// Mean and SD (population) of the usable speeds below `below_deg_s`.
struct SpeedSpread {
  double mean_deg_s = 0, sd_deg_s = 0;
  std::size_t samples = 0;
};
SpeedSpread speed_spread_below(const std::vector<double>& speed, const std::vector<bool>& usable, double below_deg_s);

}  // namespace gazemill
