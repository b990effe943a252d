#pragma once
// One eye's gaze over one trial, in degrees of visual angle from the screen
// centre, ready for velocity and event detection.

#include <cstdint>
#include <vector>

#include "detectors/visual_angle.h"
#include "pipeline/recording.h"

namespace gazemill {

struct GazeTrace {
  std::vector<Microseconds> time_us;
  std::vector<double> x_px, y_px;     // NaN where missing
  std::vector<double> x_deg, y_deg;   // NaN where missing
  std::vector<float> pupil;           // NaN where missing
  std::vector<std::uint8_t> valid;
  double interval_us = 0;             // median sample interval of this trace
  std::size_t size() const { return time_us.size(); }
};

/// Samples [first, last) of `eye` as a trace. Gaps of missing samples no
/// longer than `interpolate_max_ms` are filled linearly (0 = never); a gap
/// longer than that is left missing. Interpolated samples are marked valid.
GazeTrace make_gaze_trace(const SampleColumns& samples, Eye eye, std::size_t first, std::size_t last,
                          const VisualAngle& angle, double interpolate_max_ms = 0.0);

/// The average of both eyes where both are valid; missing where either is.
GazeTrace average_eyes(const GazeTrace& left, const GazeTrace& right, const VisualAngle& angle);

/// Median interval (us) between consecutive timestamps; 0 for fewer than 2 samples.
double median_interval_us(const std::vector<Microseconds>& time_us);

}  // namespace gazemill
