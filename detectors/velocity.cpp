#include "detectors/velocity.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "detectors/savitzky_golay.h"

namespace gazemill {

int savitzky_golay_window_samples(const VelocityParams& p, double interval_us) {
  int w = static_cast<int>(std::lround(p.sg_window_ms * 1000.0 / interval_us));
  if (w % 2 == 0) ++w;
  if (w < p.sg_order + 2) w = p.sg_order + 2 + ((p.sg_order + 2) % 2 == 0 ? 1 : 0);
  return std::max(w, 3);
}

Velocity compute_velocity(const GazeTrace& g, const VelocityParams& p) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  const std::size_t n = g.size();
  Velocity v;
  v.vx.assign(n, kNaN);
  v.vy.assign(n, kNaN);
  v.speed.assign(n, kNaN);
  v.acceleration.assign(n, kNaN);
  if (n < 2 || g.interval_us <= 0) return v;

  // Prefix counts of bad samples and of broken steps, so each window is checked in O(1).
  // A step is broken when it is longer than max_gap_factor x the median of the
  // steps around it, so a recording whose rate changes part-way still works.
  std::vector<int> bad(n + 1, 0), broken(n + 1, 0);
  std::vector<Microseconds> step(n, 0);
  for (std::size_t i = 1; i < n; ++i) step[i] = g.time_us[i] - g.time_us[i - 1];
  constexpr std::size_t kAround = 4;
  for (std::size_t i = 0; i < n; ++i) {
    bad[i + 1] = bad[i] + (g.valid[i] ? 0 : 1);
    bool step_broken = false;
    if (i > 0) {
      Microseconds near[2 * kAround + 1];
      std::size_t m = 0;
      for (std::size_t k = i > kAround ? i - kAround : 1; k <= std::min(n - 1, i + kAround); ++k) near[m++] = step[k];
      std::nth_element(near, near + m / 2, near + m);
      const double local = static_cast<double>(std::min<Microseconds>(near[m / 2], static_cast<Microseconds>(g.interval_us * 4)));
      step_broken = static_cast<double>(step[i]) > p.max_gap_factor * std::max(local, 1.0);
    }
    broken[i + 1] = broken[i] + (step_broken ? 1 : 0);
  }
  auto whole = [&](std::size_t a, std::size_t b) {  // samples a..b inclusive
    return bad[b + 1] - bad[a] == 0 && broken[b + 1] - broken[a + 1] == 0;
  };

  if (p.method == VelocityMethod::two_point) {
    for (std::size_t i = 1; i < n; ++i) {
      if (!whole(i - 1, i)) continue;
      const double dt = static_cast<double>(g.time_us[i] - g.time_us[i - 1]) * 1e-6;
      v.vx[i] = (g.x_deg[i] - g.x_deg[i - 1]) / dt;
      v.vy[i] = (g.y_deg[i] - g.y_deg[i - 1]) / dt;
    }
    // The first sample has no predecessor: it takes its successor's velocity.
    v.vx[0] = v.vx[1];
    v.vy[0] = v.vy[1];
  } else {
    const bool sg = p.method == VelocityMethod::savitzky_golay;
    const int w = sg ? savitzky_golay_window_samples(p, g.interval_us) : 5;
    const std::size_t h = static_cast<std::size_t>(w / 2);
    // Coefficients for every position in the window: the centre for interior
    // samples, off-centre ones for samples near the edge of a stretch of data.
    std::vector<std::vector<double>> d1(static_cast<std::size_t>(w)), d2(static_cast<std::size_t>(w));
    for (int q = 0; q < w; ++q) {
      const int pos = q - static_cast<int>(h);
      if (sg) {
        d1[static_cast<std::size_t>(q)] = savitzky_golay_coefficients_at(w, p.sg_order, 1, pos);
        d2[static_cast<std::size_t>(q)] = savitzky_golay_coefficients_at(w, p.sg_order, 2, pos);
      }
    }
    if (!sg) d1[h] = {-1.0 / 6, -1.0 / 6, 0.0, 1.0 / 6, 1.0 / 6};
    auto apply = [&](std::size_t i, std::size_t a, std::size_t q) {  // sample i from the window starting at a
      const double dt = static_cast<double>(g.time_us[a + 2 * h] - g.time_us[a]) * 1e-6 / static_cast<double>(2 * h);
      const double* x = &g.x_deg[a];
      const double* y = &g.y_deg[a];
      double sx = 0, sy = 0;
      const std::vector<double>& c1 = d1[q];
      for (std::size_t k = 0; k < c1.size(); ++k) {
        sx += c1[k] * x[k];
        sy += c1[k] * y[k];
      }
      v.vx[i] = sx / dt;
      v.vy[i] = sy / dt;
      if (sg) {
        double ax = 0, ay = 0;
        for (std::size_t k = 0; k < d2[q].size(); ++k) {
          ax += d2[q][k] * x[k];
          ay += d2[q][k] * y[k];
        }
        v.acceleration[i] = std::sqrt(ax * ax + ay * ay) / (dt * dt);
      }
    };
    // Stretches of usable samples: valid, and no broken step between them.
    std::size_t start = 0;
    while (start < n) {
      if (!g.valid[start]) {
        ++start;
        continue;
      }
      std::size_t end = start + 1;
      while (end < n && whole(end - 1, end)) ++end;
      if (end - start >= static_cast<std::size_t>(w)) {
        for (std::size_t i = start; i < end; ++i) {
          if (i >= start + h && i + h < end) {
            apply(i, i - h, h);
          } else if (sg) {
            const std::size_t a = i < start + h ? start : end - static_cast<std::size_t>(w);
            apply(i, a, i - a);
          }
        }
      }
      start = end;
    }
  }
  for (std::size_t i = 0; i < n; ++i) v.speed[i] = std::sqrt(v.vx[i] * v.vx[i] + v.vy[i] * v.vy[i]);
  return v;
}

}  // namespace gazemill
