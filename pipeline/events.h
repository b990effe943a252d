#pragma once
// What a sample or a stretch of samples is: the classes the detectors assign
// and the simulator's ground truth uses.

#include <string>

#include "pipeline/time_units.h"

namespace gazemill {

// pursuit (smooth pursuit) comes last so that the codes of stores written
// before it keep their meaning; only a study that asks for it has it.
enum class SampleLabel : unsigned char { fixation = 0, saccade = 1, pso = 2, blink = 3, loss = 4, other = 5, pursuit = 6 };

inline const char* to_string(SampleLabel l) {
  switch (l) {
    case SampleLabel::fixation: return "fixation";
    case SampleLabel::saccade: return "saccade";
    case SampleLabel::pso: return "pso";
    case SampleLabel::blink: return "blink";
    case SampleLabel::loss: return "loss";
    case SampleLabel::other: return "other";
    case SampleLabel::pursuit: return "pursuit";
  }
  return "other";
}

}  // namespace gazemill

#include <cstdint>
#include <limits>
#include <map>
#include <string>
#include <vector>

#include "pipeline/recording.h"

namespace gazemill {

/// A fixation: its samples' time span (end exclusive: last sample + one interval).
struct FixationEvent {
  std::string trial;
  Eye eye = Eye::left;
  Microseconds start_us = 0;
  Microseconds end_us = 0;
  double x_px = 0, y_px = 0;                // mean position
  double x_median_px = 0, y_median_px = 0;  // median position
  double x_deg = 0, y_deg = 0;              // mean, from the screen centre
  double dispersion_deg = 0;                // (max x - min x) + (max y - min y)
  double pupil = std::numeric_limits<double>::quiet_NaN();  // mean over its samples, in the input's unit; NaN without a pupil
  double duration_ms() const { return static_cast<double>(end_us - start_us) / 1000.0; }
};

struct SaccadeEvent {
  std::string trial;
  Eye eye = Eye::left;
  Microseconds start_us = 0;
  Microseconds end_us = 0;
  double start_x_px = 0, start_y_px = 0, end_x_px = 0, end_y_px = 0;
  double amplitude_deg = 0;
  double peak_velocity_deg_s = 0;
  double direction_deg = 0;  // 0 = rightwards, 90 = downwards on the screen
};

struct BlinkEvent {
  std::string trial;
  Eye eye = Eye::left;
  Microseconds start_us = 0;
  Microseconds end_us = 0;
};

/// A stretch of lost tracking (not a blink) inside a trial; end inclusive (its last sample).
struct LossEvent {
  std::string trial;
  Microseconds start_us = 0;
  Microseconds end_us = 0;
};

/// One trial's detection: the eye used, the values the detector set from the
/// trial's own data (adaptive thresholds, by name with the unit in it; none
/// for a fixed threshold), so that every trial's labels can be redone, and
/// its sample counts, so that cleaning needs no samples.
struct TrialDetection {
  std::string trial;
  Eye eye = Eye::left;  // left for the average of both eyes
  std::map<std::string, double> fitted;
  std::uint64_t samples = 0;          // samples inside the trial
  std::uint64_t missing_samples = 0;  // of those, samples with no valid gaze in any recorded eye
};

/// Everything detected in one recording, trial by trial.
struct DetectedEvents {
  std::vector<FixationEvent> fixations;
  std::vector<SaccadeEvent> saccades;
  std::vector<BlinkEvent> blinks;
  std::vector<LossEvent> losses;
  std::vector<TrialDetection> trials;  // one per trial of the recording, in its order
};

/// One of the tracker's own events, as its physio events file gives it:
/// from onset for its duration (end exclusive, as gazemill's own events).
struct TrackerEvent {
  SampleLabel kind = SampleLabel::fixation;  // fixation, saccade or blink
  Eye eye = Eye::left;
  Microseconds start_us = 0;
  Microseconds end_us = 0;
};

}  // namespace gazemill
