#include "detectors/velocity.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "detectors/savitzky_golay.h"
#include "detectors/timestamp_gaps.h"

namespace gazemill {

int savitzky_golay_window_samples(const VelocityParams& p, double interval_us) {
  int w = static_cast<int>(std::lround(p.sg_window_ms * 1000.0 / interval_us));
  if (w % 2 == 0) ++w;
  if (w < p.sg_order + 2) w = p.sg_order + 2 + ((p.sg_order + 2) % 2 == 0 ? 1 : 0);
  return std::max(w, 3);
}

namespace {

// Stretches of usable samples: valid, with no gap in the timestamps between
// them (is_gap_step).
template <typename F>
void for_each_stretch(const GazeTrace& g, const VelocityParams& p, F&& f) {
  const std::size_t n = g.size();
  const Microseconds* t = g.time_us.data();
  auto broken = [&](std::size_t i) { return is_gap_step(t, n, i, g.interval_us, p.max_gap_factor); };
  std::size_t start = 0;
  while (start < n) {
    if (!g.valid[start]) {
      ++start;
      continue;
    }
    std::size_t end = start + 1;
    while (end < n && g.valid[end] && !broken(end)) ++end;
    f(start, end);
    start = end;
  }
}

// sums[j] = sum over k of c[k] * v[j + k] for j < m. Added in k order, the
// same sum bit for bit as one window at a time, but over many j at once,
// which the compiler turns into vector instructions (four doubles at a time
// where the processor has AVX2; no fused multiply-add, so every machine adds
// alike).
[[gnu::target_clones("avx2", "default")]] void window_sums(const double* __restrict c, std::size_t width, const double* __restrict v,
                                                           std::size_t m, double* __restrict sums) {
  for (std::size_t j = 0; j < m; ++j) sums[j] = 0.0;
  for (std::size_t k = 0; k < width; ++k) {
    const double ck = c[k];
    const double* vk = v + k;
    for (std::size_t j = 0; j < m; ++j) sums[j] += ck * vk[j];
  }
}

}  // namespace

Velocity compute_velocity(const GazeTrace& g, const VelocityParams& p) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  const std::size_t n = g.size();
  const bool sg = p.method == VelocityMethod::savitzky_golay;
  const bool acceleration = sg && p.with_acceleration;
  Velocity v;
  // Without components, vx and vy are worked out but only the speed is kept.
  std::vector<double> scratch_x, scratch_y;
  std::vector<double>& vx = p.with_components ? v.vx : scratch_x;
  std::vector<double>& vy = p.with_components ? v.vy : scratch_y;
  if (p.with_components) {
    vx.assign(n, kNaN);
    vy.assign(n, kNaN);
  }
  if (p.with_speed) v.speed.assign(n, kNaN);
  v.acceleration.assign(acceleration ? n : 0, kNaN);
  if (n < 2 || g.interval_us <= 0) return v;
  const double* X = g.x_deg.data();
  const double* Y = g.y_deg.data();
  const Microseconds* T = g.time_us.data();

  auto store = [&](std::size_t i, double x, double y) {
    if (p.with_components) {
      vx[i] = x;
      vy[i] = y;
    }
    if (p.with_speed) v.speed[i] = std::sqrt(x * x + y * y);
  };
  if (p.method == VelocityMethod::two_point) {
    for_each_stretch(g, p, [&](std::size_t a, std::size_t b) {
      for (std::size_t i = a + 1; i < b; ++i) {
        const double dt = static_cast<double>(T[i] - T[i - 1]) * 1e-6;
        store(i, (X[i] - X[i - 1]) / dt, (Y[i] - Y[i - 1]) / dt);
      }
      // The first sample has no predecessor: it takes its successor's velocity.
      if (b - a >= 2) {
        const double dt = static_cast<double>(T[a + 1] - T[a]) * 1e-6;
        store(a, (X[a + 1] - X[a]) / dt, (Y[a + 1] - Y[a]) / dt);
      }
    });
  } else {
    const int w = sg ? savitzky_golay_window_samples(p, g.interval_us) : 2 * std::max(1, p.moving_average_half_width) + 1;
    const std::size_t h = static_cast<std::size_t>(w / 2);
    // Coefficients for every position in the window: the centre for interior
    // samples, off-centre ones for samples near the edge of a stretch of data.
    // Computed once per (window, order) and kept (savitzky_golay_table).
    const std::vector<std::vector<double>>* d1 = sg ? &savitzky_golay_table(w, p.sg_order, 1) : nullptr;
    const std::vector<std::vector<double>>* d2 = acceleration ? &savitzky_golay_table(w, p.sg_order, 2) : nullptr;
    const std::size_t width = static_cast<std::size_t>(w);
    auto apply = [&](std::size_t i, std::size_t a, std::size_t q) {  // sample i from the window starting at a
      // Local spacing from the window's own timestamps copes with jitter and rate changes.
      const double inv_dt = static_cast<double>(2 * h) / (static_cast<double>(T[a + 2 * h] - T[a]) * 1e-6);
      const double* c1 = (*d1)[q].data();
      double sx = 0, sy = 0;
      for (std::size_t k = 0; k < width; ++k) {
        sx += c1[k] * X[a + k];
        sy += c1[k] * Y[a + k];
      }
      store(i, sx * inv_dt, sy * inv_dt);
      if (acceleration) {
        const double* c2 = (*d2)[q].data();
        double ax = 0, ay = 0;
        for (std::size_t k = 0; k < width; ++k) {
          ax += c2[k] * X[a + k];
          ay += c2[k] * Y[a + k];
        }
        v.acceleration[i] = std::sqrt(ax * ax + ay * ay) * inv_dt * inv_dt;
      }
    };
    std::vector<double> sums_x, sums_y, sums_ax, sums_ay;
    for_each_stretch(g, p, [&](std::size_t a, std::size_t b) {
      if (b - a < width) return;
      for (std::size_t i = a; i < a + h && sg; ++i) apply(i, a, i - a);
      if (!sg) {
        // The moving difference: sum of (x[n+k] - x[n-k]) for k = 1..K, over
        // K (K+1) dt, exact for a ramp. dt is the window's own span over 2K,
        // which makes the divisor (K+1) span / 2.
        const double scale = 2.0 / static_cast<double>(h + 1);
        for (std::size_t i = a + h; i + h < b; ++i) {
          double sx = 0, sy = 0;
          for (std::size_t k = 1; k <= h; ++k) {
            sx += X[i + k] - X[i - k];
            sy += Y[i + k] - Y[i - k];
          }
          const double inv = scale / (static_cast<double>(T[i + h] - T[i - h]) * 1e-6);
          store(i, sx * inv, sy * inv);
        }
        return;
      }
      // Interior samples, the centred window: the sums for the whole stretch at once.
      const std::size_t m = b - a - 2 * h;
      sums_x.resize(m);
      sums_y.resize(m);
      window_sums((*d1)[h].data(), width, X + a, m, sums_x.data());
      window_sums((*d1)[h].data(), width, Y + a, m, sums_y.data());
      if (acceleration) {
        sums_ax.resize(m);
        sums_ay.resize(m);
        window_sums((*d2)[h].data(), width, X + a, m, sums_ax.data());
        window_sums((*d2)[h].data(), width, Y + a, m, sums_ay.data());
      }
      for (std::size_t j = 0; j < m; ++j) {
        const std::size_t i = a + h + j;
        const double inv_dt = static_cast<double>(2 * h) / (static_cast<double>(T[i + h] - T[i - h]) * 1e-6);
        store(i, sums_x[j] * inv_dt, sums_y[j] * inv_dt);
        if (acceleration) v.acceleration[i] = std::sqrt(sums_ax[j] * sums_ax[j] + sums_ay[j] * sums_ay[j]) * inv_dt * inv_dt;
      }
      for (std::size_t i = b - h; i < b && sg; ++i) apply(i, b - width, i - (b - width));
    });
  }
  return v;
}

}  // namespace gazemill
