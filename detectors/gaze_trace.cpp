#include "detectors/gaze_trace.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace gazemill {

double median_interval_us(const std::vector<Microseconds>& t) {
  if (t.size() < 2) return 0.0;
  std::vector<Microseconds> d(t.size() - 1);
  for (std::size_t i = 1; i < t.size(); ++i) d[i - 1] = t[i] - t[i - 1];
  std::nth_element(d.begin(), d.begin() + static_cast<std::ptrdiff_t>(d.size() / 2), d.end());
  return static_cast<double>(d[d.size() / 2]);
}

GazeTrace make_gaze_trace(const SampleColumns& s, Eye eye, std::size_t first, std::size_t last, const VisualAngle& angle,
                          double interpolate_max_ms) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  const EyeSamples& e = s.eye(eye);
  GazeTrace g;
  const std::size_t n = last - first;
  g.time_us.assign(s.time_us.begin() + static_cast<std::ptrdiff_t>(first), s.time_us.begin() + static_cast<std::ptrdiff_t>(last));
  g.x_px.resize(n);
  g.y_px.resize(n);
  g.pupil.assign(e.pupil.begin() + static_cast<std::ptrdiff_t>(first), e.pupil.begin() + static_cast<std::ptrdiff_t>(last));
  g.valid.assign(e.valid.begin() + static_cast<std::ptrdiff_t>(first), e.valid.begin() + static_cast<std::ptrdiff_t>(last));
  for (std::size_t i = 0; i < n; ++i) {
    g.x_px[i] = g.valid[i] ? e.x_px[first + i] : kNaN;
    g.y_px[i] = g.valid[i] ? e.y_px[first + i] : kNaN;
  }
  g.interval_us = median_interval_us(g.time_us);

  if (interpolate_max_ms > 0) {
    const Microseconds limit = static_cast<Microseconds>(interpolate_max_ms * 1000.0);
    std::size_t i = 0;
    while (i < n) {
      if (g.valid[i]) {
        ++i;
        continue;
      }
      std::size_t j = i;
      while (j < n && !g.valid[j]) ++j;
      // Only gaps with valid samples on both sides, and short enough, are filled.
      if (i > 0 && j < n && g.time_us[j] - g.time_us[i - 1] <= limit) {
        const double t0 = static_cast<double>(g.time_us[i - 1]), t1 = static_cast<double>(g.time_us[j]);
        for (std::size_t k = i; k < j; ++k) {
          const double w = (static_cast<double>(g.time_us[k]) - t0) / (t1 - t0);
          g.x_px[k] = g.x_px[i - 1] + w * (g.x_px[j] - g.x_px[i - 1]);
          g.y_px[k] = g.y_px[i - 1] + w * (g.y_px[j] - g.y_px[i - 1]);
          g.valid[k] = 1;
        }
      }
      i = j;
    }
  }
  g.x_deg.resize(n);
  g.y_deg.resize(n);
  for (std::size_t i = 0; i < n; ++i) {
    g.x_deg[i] = g.valid[i] ? angle.x_deg(g.x_px[i]) : kNaN;
    g.y_deg[i] = g.valid[i] ? angle.y_deg(g.y_px[i]) : kNaN;
  }
  return g;
}

GazeTrace average_eyes(const GazeTrace& l, const GazeTrace& r, const VisualAngle& angle) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  GazeTrace g = l;
  for (std::size_t i = 0; i < g.size(); ++i) {
    const bool ok = l.valid[i] && r.valid[i];
    g.valid[i] = ok;
    g.x_px[i] = ok ? 0.5 * (l.x_px[i] + r.x_px[i]) : kNaN;
    g.y_px[i] = ok ? 0.5 * (l.y_px[i] + r.y_px[i]) : kNaN;
    g.x_deg[i] = ok ? angle.x_deg(g.x_px[i]) : kNaN;
    g.y_deg[i] = ok ? angle.y_deg(g.y_px[i]) : kNaN;
    g.pupil[i] = ok ? 0.5f * (l.pupil[i] + r.pupil[i]) : std::numeric_limits<float>::quiet_NaN();
  }
  return g;
}

}  // namespace gazemill
