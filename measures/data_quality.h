#pragma once
// Figures of a recording's signal quality, from its samples and events:
// precision within fixations, sampling regularity, and summaries of value
// sets for the study report. Pure functions: typed values in, typed values
// out, no file I/O.
//
// Precision follows Holmqvist, Nyström & Mulvey (2012), "Eye tracker data
// quality: what it is and how to measure it" (ETRA '12): RMS-S2S is the root
// mean square of the angular distances between successive samples, and STD
// the spread of the samples around their mean position (x and y pooled).
// Both are computed within fixations, where the eye is taken to be still, so
// that what is left is the tracker's noise. Niehorster et al. (2020) advise
// reporting both, since their ratio says what kind of noise it is (about
// sqrt(2) for white noise, lower for smoother signals).

#include <cstddef>
#include <cstdint>
#include <limits>
#include <span>
#include <vector>

#include "pipeline/report_model.h"
#include "pipeline/time_units.h"

namespace gazemill {

/// Precision of one stretch of gaze (one fixation), in degrees.
struct FixationPrecision {
  std::size_t samples = 0;    // valid samples used
  std::size_t intervals = 0;  // pairs of successive valid samples
  double rms_s2s_deg = std::numeric_limits<double>::quiet_NaN();  // NaN with no interval
  double std_deg = std::numeric_limits<double>::quiet_NaN();      // NaN with no sample
};

/// RMS-S2S and STD of gaze positions in degrees (x_deg, y_deg of equal
/// length; a sample with valid[i] == 0 or a NaN coordinate is left out, and
/// no interval spans it: successive means neighbouring in the input).
///   RMS-S2S = sqrt(mean over successive pairs of (dx^2 + dy^2))
///   STD     = sqrt(mean over samples of ((x - mean x)^2 + (y - mean y)^2))   (population form)
FixationPrecision fixation_precision(std::span<const double> x_deg, std::span<const double> y_deg,
                                     std::span<const std::uint8_t> valid);

/// How evenly a recording was sampled, from its timestamps.
struct SamplingRegularity {
  std::size_t intervals = 0;
  double median_interval_us = std::numeric_limits<double>::quiet_NaN();
  double measured_rate_hz = std::numeric_limits<double>::quiet_NaN();  // 1e6 / median interval
  double interval_sd_us = std::numeric_limits<double>::quiet_NaN();    // of the intervals that are no gap
  /// Intervals more than `irregular_tolerance` (a fraction) away from the median, gaps excluded.
  std::size_t irregular_intervals = 0;
  /// Intervals longer than `gap_factor` times the median: samples dropped or a pause.
  std::size_t gaps = 0;
  Microseconds longest_gap_us = 0;
  /// Intervals of zero or negative length (repeated or backward timestamps).
  std::size_t non_increasing = 0;
};

struct RegularityOptions {
  double irregular_tolerance = 0.10;  // common practice, no source: 10 % of the median interval
  double gap_factor = 2.0;            // as the detectors' gap rule (detectors/timestamp_gaps.h)
};

SamplingRegularity sampling_regularity(std::span<const Microseconds> time_us, const RegularityOptions& options = {});

/// Quantiles by linear interpolation between order statistics (Hyndman &
/// Fan 1996, definition 7; numpy's and R's default): the p quantile of n
/// sorted values is at rank h = (n - 1) p, interpolated between floor(h)
/// and ceil(h). `sorted` must be sorted and non-empty; p in [0, 1].
double quantile_sorted(std::span<const double> sorted, double p);

/// Mean, quartiles and the outer 5 % of a set of values (NaNs left out).
ValueSummary summarise(std::vector<double> values);

/// Counts in equal bins [first_edge + k w, first_edge + (k + 1) w); values
/// beyond the last edge go to the last bin, below the first to the first
/// (so nothing is dropped); NaNs are left out.
Histogram histogram(std::span<const double> values, double first_edge, double bin_width, std::size_t bins);

/// Counts over a grid of x bins by y bins, clamped as histogram() is.
Histogram2D histogram_2d(std::span<const double> x, std::span<const double> y, double x_first_edge, double x_bin_width,
                         std::size_t x_bins, double y_first_edge, double y_bin_width, std::size_t y_bins);

/// Robust z-scores: (v - median) / (1.4826 MAD), after Leys, Ley, Klein,
/// Bernard & Licata (2013), J. Exp. Soc. Psychol. 49(4), 764-766 (from
/// memory). 1.4826 makes the MAD estimate a normal distribution's SD. NaN
/// for NaN inputs, and for every value when fewer than three values are
/// finite or the MAD is zero (no spread to judge against).
std::vector<double> robust_z_scores(std::span<const double> values);

/// The main sequence in the exponential form V = v_max (1 - exp(-A / c))
/// (Bahill, Clark & Stark 1975 and later fits; the constants vary between
/// studies and trackers, so a pair of them bounds a plausible band).
double main_sequence_peak_velocity(double amplitude_deg, double v_max_deg_s, double c_deg);

/// One value per bin of `bin_us`, from `from_us` up to `to_us`: the mean of
/// the valid samples whose time falls in the bin (NaN for a bin without
/// one). For drawing a time course at a fixed budget of points.
std::vector<double> bin_means(std::span<const Microseconds> time_us, std::span<const float> values, std::span<const std::uint8_t> valid,
                              Microseconds from_us, Microseconds to_us, Microseconds bin_us);

}  // namespace gazemill
