#include "detectors/dispersion_threshold_detector.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "detectors/median.h"
#include "detectors/savitzky_golay.h"
#include "detectors/timestamp_gaps.h"

namespace gazemill {

std::size_t dispersion_window_samples(double min_duration_ms, double interval_us) {
  // The paper leaves the rounding open; ceil, with a small tolerance for
  // durations that are whole multiples of the interval.
  return static_cast<std::size_t>(std::max(1.0, std::ceil(min_duration_ms * 1000.0 / interval_us - 1e-9)));
}

int smoothing_window_samples(double smoothing_window_ms, double interval_us) {
  if (!(smoothing_window_ms > 0)) return 0;
  int w = static_cast<int>(std::lround(smoothing_window_ms * 1000.0 / interval_us));
  if (w % 2 == 0) ++w;
  return std::max(w, 5);  // an order-2 fit needs more than three samples to smooth at all
}

namespace {

// The bounding box of the samples seen so far; D = width + height.
struct Extent {
  double x_lo, x_hi, y_lo, y_hi;
  Extent(double x, double y) : x_lo(x), x_hi(x), y_lo(y), y_hi(y) {}
  void add(double x, double y) {
    x_lo = std::min(x_lo, x), x_hi = std::max(x_hi, x);
    y_lo = std::min(y_lo, y), y_hi = std::max(y_hi, y);
  }
  double dispersion() const { return (x_hi - x_lo) + (y_hi - y_lo); }
};

}  // namespace

double median_window_dispersion(const std::vector<double>& x, const std::vector<double>& y,
                                const std::vector<bool>& usable, std::size_t window) {
  // Windows side by side from the start of each stretch of usable samples:
  // each sample is read once. Every overlapping window gave about the same
  // median at several times the cost.
  std::vector<double> dispersions;
  const std::size_t n = x.size();
  std::size_t a = 0;
  while (window > 0 && a + window <= n) {
    Extent box(x[a], y[a]);
    std::size_t k = a;
    for (; k < a + window && usable[k]; ++k) box.add(x[k], y[k]);
    if (k < a + window) {
      a = k + 1;  // an unusable sample: the next window starts after it
      continue;
    }
    dispersions.push_back(box.dispersion());
    a = k;
  }
  if (dispersions.empty()) return std::numeric_limits<double>::quiet_NaN();
  const MiddlePair m = middle_pair_in_place(dispersions);
  return (m.lower + m.upper) / 2.0;
}

ParameterList DispersionThresholdDetector::parameters() const {
  return {{"dispersion_threshold_deg", p_.dispersion_threshold_deg},
          {"min_duration_ms", p_.min_duration_ms},
          {"smoothing_window_ms", p_.smoothing_window_ms},
          {"dispersion_median_factor", p_.dispersion_median_factor}};
}

ParameterList DispersionThresholdDetector::label(const GazeTrace& g, std::vector<SampleLabel>& labels) const {
  const std::size_t n = labels.size();
  const std::size_t window = dispersion_window_samples(p_.min_duration_ms, g.interval_us);
  // Our rule, not the paper's (which has no notion of time between samples):
  // the first sample after a gap in the timestamps is treated as missing, so
  // no window or fixation spans the gap, as no velocity window does. The
  // shared clean-up then joins the fixations on either side only if the gap
  // is short and the eye stayed put, as across lost samples.
  const std::vector<bool> gaps = gap_steps(g);
  std::vector<bool> usable(n);
  for (std::size_t k = 0; k < n; ++k) usable[k] = labels[k] == SampleLabel::other && !gaps[k];
  // Optional smoothing; the samples themselves are left alone for the events.
  const int smoothing = smoothing_window_samples(p_.smoothing_window_ms, g.interval_us);
  std::vector<double> xs, ys;
  if (smoothing > 0) {
    xs = savitzky_golay_smooth(g.x_deg, usable, gaps, smoothing, 2);
    ys = savitzky_golay_smooth(g.y_deg, usable, gaps, smoothing, 2);
  }
  const std::vector<double>& X = smoothing > 0 ? xs : g.x_deg;
  const std::vector<double>& Y = smoothing > 0 ? ys : g.y_deg;
  // Our rule too: with no fixed threshold, it comes from this trace's own
  // windows. A trace without one whole window holds no fixation either way.
  double threshold = p_.dispersion_threshold_deg;
  if (!(threshold > 0)) threshold = p_.dispersion_median_factor * median_window_dispersion(X, Y, usable, window);
  std::vector<bool> in_fixation(n, false);
  std::size_t i = 0;
  while (!std::isnan(threshold) && i + window <= n) {
    std::size_t j = i + window;
    // A window cannot span missing data: restart after the last unusable sample in it.
    std::size_t last_bad = n;
    for (std::size_t k = i; k < j; ++k) {
      if (!usable[k]) last_bad = k;
    }
    if (last_bad != n) {
      i = last_bad + 1;
      continue;
    }
    // D only grows as samples are added: stop at the first that passes the threshold.
    Extent box(X[i], Y[i]);
    bool fits = true;
    for (std::size_t k = i + 1; k < j && fits; ++k) {
      box.add(X[k], Y[k]);
      fits = box.dispersion() <= threshold;
    }
    if (fits) {
      // Grow until the next point would exceed the threshold; that point is not part of it.
      while (j < n && usable[j]) {
        Extent grown = box;
        grown.add(X[j], Y[j]);
        if (grown.dispersion() > threshold) break;
        box = grown;
        ++j;
      }
      for (std::size_t k = i; k < j; ++k) in_fixation[k] = true;
      i = j;
    } else {
      ++i;
    }
  }
  for (std::size_t k = 0; k < n; ++k) {
    if (usable[k]) labels[k] = in_fixation[k] ? SampleLabel::fixation : SampleLabel::saccade;
  }
  // Nothing set from the data with a fixed threshold, or with no whole window.
  if (p_.dispersion_threshold_deg > 0 || std::isnan(threshold)) return {};
  return {{"dispersion_threshold_deg", threshold}};
}

}  // namespace gazemill
