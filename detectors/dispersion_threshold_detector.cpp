#include "detectors/dispersion_threshold_detector.h"

#include <algorithm>
#include <cmath>

namespace gazemill {

std::size_t dispersion_window_samples(double min_duration_ms, double interval_us) {
  // The paper leaves the rounding open; ceil, with a small tolerance for
  // durations that are whole multiples of the interval.
  return static_cast<std::size_t>(std::max(1.0, std::ceil(min_duration_ms * 1000.0 / interval_us - 1e-9)));
}

ParameterList DispersionThresholdDetector::parameters() const {
  return {{"dispersion_threshold_deg", p_.dispersion_threshold_deg}, {"min_duration_ms", p_.min_duration_ms}};
}

void DispersionThresholdDetector::label(const GazeTrace& g, std::vector<SampleLabel>& labels) const {
  const std::size_t n = labels.size();
  const std::size_t window = dispersion_window_samples(p_.min_duration_ms, g.interval_us);
  const double threshold = p_.dispersion_threshold_deg;
  auto usable = [&](std::size_t k) { return labels[k] == SampleLabel::other; };
  std::vector<bool> in_fixation(n, false);
  std::size_t i = 0;
  while (i + window <= n) {
    std::size_t j = i + window;
    // A window cannot span missing data: restart after the last unusable sample in it.
    std::size_t last_bad = n;
    for (std::size_t k = i; k < j; ++k) {
      if (!usable(k)) last_bad = k;
    }
    if (last_bad != n) {
      i = last_bad + 1;
      continue;
    }
    double x_lo = g.x_deg[i], x_hi = x_lo, y_lo = g.y_deg[i], y_hi = y_lo;
    for (std::size_t k = i + 1; k < j; ++k) {
      x_lo = std::min(x_lo, g.x_deg[k]);
      x_hi = std::max(x_hi, g.x_deg[k]);
      y_lo = std::min(y_lo, g.y_deg[k]);
      y_hi = std::max(y_hi, g.y_deg[k]);
    }
    if ((x_hi - x_lo) + (y_hi - y_lo) <= threshold) {
      // Grow until the next point would exceed the threshold; that point is not part of it.
      while (j < n && usable(j)) {
        const double nx_lo = std::min(x_lo, g.x_deg[j]), nx_hi = std::max(x_hi, g.x_deg[j]);
        const double ny_lo = std::min(y_lo, g.y_deg[j]), ny_hi = std::max(y_hi, g.y_deg[j]);
        if ((nx_hi - nx_lo) + (ny_hi - ny_lo) > threshold) break;
        x_lo = nx_lo, x_hi = nx_hi, y_lo = ny_lo, y_hi = ny_hi;
        ++j;
      }
      for (std::size_t k = i; k < j; ++k) in_fixation[k] = true;
      i = j;
    } else {
      ++i;
    }
  }
  for (std::size_t k = 0; k < n; ++k) {
    if (usable(k)) labels[k] = in_fixation[k] ? SampleLabel::fixation : SampleLabel::saccade;
  }
}

}  // namespace gazemill
