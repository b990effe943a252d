#pragma once
// Where the timestamps leave a gap that no smoothing or differentiation
// window may span, even when every sample is valid (a tracker that drops
// samples without marking them, or a recording paused part-way).

#include <cstddef>
#include <vector>

#include "detectors/gaze_trace.h"

namespace gazemill {

/// A step this much longer than the longer of its two neighbouring steps is a gap.
inline constexpr double kDefaultMaxGapFactor = 2.0;

/// Whether the step from sample i - 1 to sample i (1 <= i < n) is a gap: longer
/// than max_gap_factor x the longer of its two neighbouring steps (a gap
/// stands out from the steps around it, while jitter and a rate that changes
/// part-way do not), or longer than ten median intervals.
inline bool is_gap_step(const Microseconds* t, std::size_t n, std::size_t i, double interval_us,
                        double max_gap_factor) {
  const Microseconds step = t[i] - t[i - 1];
  // The common case first: no longer than the step before and no gross gap.
  if (i >= 2 && step <= t[i - 1] - t[i - 2] && static_cast<double>(step) <= 10.0 * interval_us) return false;
  Microseconds reference = i >= 2 ? t[i - 1] - t[i - 2] : 0;
  if (i + 1 < n && t[i + 1] - t[i] > reference) reference = t[i + 1] - t[i];
  if (reference == 0) reference = step;
  return static_cast<double>(step) > max_gap_factor * static_cast<double>(reference) ||
         static_cast<double>(step) > 10.0 * interval_us;
}

/// is_gap_step for every sample of `trace` (false for the first).
std::vector<bool> gap_steps(const GazeTrace& trace, double max_gap_factor = kDefaultMaxGapFactor);

}  // namespace gazemill
