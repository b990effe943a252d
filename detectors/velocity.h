#pragma once
// Gaze velocity and acceleration in deg/s and deg/s^2. Missing samples and
// gaps in the timestamps break the differentiation window: a sample whose
// window is not whole gets NaN, nothing is bridged.

#include <vector>

#include "detectors/gaze_trace.h"
#include "detectors/timestamp_gaps.h"

namespace gazemill {

enum class VelocityMethod {
  savitzky_golay,     // Savitzky-Golay differentiation, as in Nystrom & Holmqvist (2010)
  moving_average,     // sum over k = 1..K of (x[n+k] - x[n-k]), / (K (K+1) dt); K = 2 is the
                      // 5-sample (x[n+2] + x[n+1] - x[n-1] - x[n-2]) / (6 dt) of Engbert & Kliegl (2003)
  two_point,          // (x[n] - x[n-1]) / dt, as in Salvucci & Goldberg (2000)
};

struct VelocityParams {
  VelocityMethod method = VelocityMethod::savitzky_golay;
  double sg_window_ms = 20.0;  // rounded to an odd number of samples, at least order + 2
  int sg_order = 2;
  int moving_average_half_width = 2;  // K, samples either side; 2 is the published 5-sample window
  double max_gap_factor = kDefaultMaxGapFactor;  // a step this much longer than the steps around it breaks windows
  bool with_acceleration = false;  // Savitzky-Golay only
  bool with_components = true;     // keep vx and vy; off when only the speed is needed
  bool with_speed = true;          // keep the speed; off when only the components are needed
};

struct Velocity {
  std::vector<double> vx, vy;     // deg/s, NaN where the window is broken; empty without with_components
  std::vector<double> speed;      // deg/s; empty without with_speed
  std::vector<double> acceleration;  // deg/s^2 (Savitzky-Golay with_acceleration only; NaN otherwise)
};

/// The window length in samples that `params` gives at `interval_us`.
int savitzky_golay_window_samples(const VelocityParams& params, double interval_us);

Velocity compute_velocity(const GazeTrace& trace, const VelocityParams& params);

}  // namespace gazemill
