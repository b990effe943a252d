#pragma once
// What the study report needs from a recording's samples: signal-quality
// counts and each trial's gaze time course. Made by detect while the samples
// are in memory and kept with its events, so that the report (rewritten
// after every cleaning change) never decodes a sample.

#include <cstddef>
#include <cstdint>
#include <vector>

#include "pipeline/time_units.h"

namespace gazemill {

/// The report's default budget of points per trial time course, and the one detect digests with.
inline constexpr std::size_t kTimeCoursePoints = 400;

/// A trial's gaze drawn at a fixed budget of points: the mean of the valid
/// samples in each bin of bin_ms from the trial's start, rounded to a whole
/// pixel (as drawn), NaN for a bin without one.
struct TrialTimeCourse {
  double bin_ms = 0;
  std::vector<float> x_px, y_px;
};

struct SampleDigest {
  std::size_t max_points_per_trial = 0;  // the budget the time courses were made with
  // Whole recording; missing: no valid gaze in any recorded eye.
  std::uint64_t samples = 0, missing_samples = 0;
  // Inside the trials.
  std::uint64_t trial_samples = 0, trial_missing_samples = 0;
  // Sampling regularity inside the trials (the pauses between them are the experiment's).
  std::uint64_t intervals = 0, irregular_intervals = 0, gaps = 0, non_increasing = 0;
  Microseconds longest_gap_us = 0;
  double interval_variance_sum_us2 = 0;  // sum over trials of interval SD^2 x regular intervals, for a pooled SD
  std::uint64_t regular_intervals = 0;
  std::vector<double> trial_rates_hz;     // measured rate per trial with enough intervals
  // Precision of every detected fixation with at least one interval (degrees).
  std::vector<double> fixation_rms_s2s_deg, fixation_std_deg;
  std::vector<TrialTimeCourse> time_courses;  // one per trial, in the recording's trial order
};

}  // namespace gazemill
