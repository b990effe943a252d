#include "measures/data_quality.h"

#include <algorithm>
#include <cmath>

namespace gazemill {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

bool usable(double x, double y, std::uint8_t valid) { return valid != 0 && std::isfinite(x) && std::isfinite(y); }

std::size_t clamp_bin(double v, double first_edge, double width, std::size_t bins) {
  const double k = std::floor((v - first_edge) / width);
  if (!(k > 0)) return 0;  // also catches NaN
  return std::min(static_cast<std::size_t>(k), bins - 1);
}

}  // namespace

FixationPrecision fixation_precision(std::span<const double> x_deg, std::span<const double> y_deg, std::span<const std::uint8_t> valid) {
  FixationPrecision out;
  const std::size_t n = std::min({x_deg.size(), y_deg.size(), valid.size()});
  double sum_x = 0, sum_y = 0, sum_sq_step = 0;
  for (std::size_t i = 0; i < n; ++i) {
    if (!usable(x_deg[i], y_deg[i], valid[i])) continue;
    ++out.samples;
    sum_x += x_deg[i];
    sum_y += y_deg[i];
    if (i > 0 && usable(x_deg[i - 1], y_deg[i - 1], valid[i - 1])) {
      const double dx = x_deg[i] - x_deg[i - 1], dy = y_deg[i] - y_deg[i - 1];
      sum_sq_step += dx * dx + dy * dy;
      ++out.intervals;
    }
  }
  if (out.intervals > 0) out.rms_s2s_deg = std::sqrt(sum_sq_step / static_cast<double>(out.intervals));
  if (out.samples > 0) {
    const double mx = sum_x / static_cast<double>(out.samples), my = sum_y / static_cast<double>(out.samples);
    double ss = 0;
    for (std::size_t i = 0; i < n; ++i) {
      if (!usable(x_deg[i], y_deg[i], valid[i])) continue;
      ss += (x_deg[i] - mx) * (x_deg[i] - mx) + (y_deg[i] - my) * (y_deg[i] - my);
    }
    out.std_deg = std::sqrt(ss / static_cast<double>(out.samples));
  }
  return out;
}

SamplingRegularity sampling_regularity(std::span<const Microseconds> t, const RegularityOptions& o) {
  SamplingRegularity r;
  if (t.size() < 2) return r;
  std::vector<double> steps;
  steps.reserve(t.size() - 1);
  for (std::size_t i = 1; i < t.size(); ++i) {
    const Microseconds d = t[i] - t[i - 1];
    if (d <= 0) {
      ++r.non_increasing;
      continue;
    }
    steps.push_back(static_cast<double>(d));
  }
  r.intervals = t.size() - 1;
  if (steps.empty()) return r;
  std::vector<double> sorted = steps;
  const auto mid = sorted.begin() + static_cast<std::ptrdiff_t>(sorted.size() / 2);
  std::nth_element(sorted.begin(), mid, sorted.end());
  double median = *mid;
  if (sorted.size() % 2 == 0) median = 0.5 * (median + *std::max_element(sorted.begin(), mid));
  r.median_interval_us = median;
  r.measured_rate_hz = 1e6 / median;
  double sum = 0, sum_sq = 0;
  std::size_t regular = 0;
  for (double s : steps) {
    if (s > o.gap_factor * median) {
      ++r.gaps;
      r.longest_gap_us = std::max(r.longest_gap_us, static_cast<Microseconds>(s));
      continue;
    }
    if (std::abs(s - median) > o.irregular_tolerance * median) ++r.irregular_intervals;
    sum += s;
    sum_sq += s * s;
    ++regular;
  }
  if (regular > 0) {
    const double mean = sum / static_cast<double>(regular);
    r.interval_sd_us = std::sqrt(std::max(0.0, sum_sq / static_cast<double>(regular) - mean * mean));
  }
  return r;
}

double quantile_sorted(std::span<const double> sorted, double p) {
  if (sorted.empty()) return kNaN;
  const double h = static_cast<double>(sorted.size() - 1) * std::clamp(p, 0.0, 1.0);
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, sorted.size() - 1);
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[hi] - sorted[lo]);
}

ValueSummary summarise(std::vector<double> values) {
  std::erase_if(values, [](double v) { return std::isnan(v); });
  ValueSummary s;
  s.n = values.size();
  if (values.empty()) return s;
  std::sort(values.begin(), values.end());
  double sum = 0;
  for (double v : values) sum += v;
  s.mean = sum / static_cast<double>(values.size());
  s.min = values.front();
  s.max = values.back();
  s.p05 = quantile_sorted(values, 0.05);
  s.q1 = quantile_sorted(values, 0.25);
  s.median = quantile_sorted(values, 0.5);
  s.q3 = quantile_sorted(values, 0.75);
  s.p95 = quantile_sorted(values, 0.95);
  return s;
}

Histogram histogram(std::span<const double> values, double first_edge, double bin_width, std::size_t bins) {
  Histogram h{first_edge, bin_width, std::vector<std::uint64_t>(std::max<std::size_t>(bins, 1), 0)};
  for (double v : values) {
    if (std::isnan(v)) continue;
    ++h.counts[clamp_bin(v, first_edge, bin_width, h.counts.size())];
  }
  return h;
}

Histogram2D histogram_2d(std::span<const double> x, std::span<const double> y, double x_first_edge, double x_bin_width,
                         std::size_t x_bins, double y_first_edge, double y_bin_width, std::size_t y_bins) {
  Histogram2D h{x_first_edge, x_bin_width, y_first_edge, y_bin_width, std::max<std::size_t>(x_bins, 1), std::max<std::size_t>(y_bins, 1), {}};
  h.counts.assign(h.x_bins * h.y_bins, 0);
  const std::size_t n = std::min(x.size(), y.size());
  for (std::size_t i = 0; i < n; ++i) {
    if (std::isnan(x[i]) || std::isnan(y[i])) continue;
    ++h.counts[clamp_bin(x[i], x_first_edge, x_bin_width, h.x_bins) * h.y_bins + clamp_bin(y[i], y_first_edge, y_bin_width, h.y_bins)];
  }
  return h;
}

std::vector<double> robust_z_scores(std::span<const double> values) {
  std::vector<double> finite;
  for (double v : values) {
    if (std::isfinite(v)) finite.push_back(v);
  }
  std::vector<double> z(values.size(), kNaN);
  if (finite.size() < 3) return z;
  std::sort(finite.begin(), finite.end());
  const double median = quantile_sorted(finite, 0.5);
  std::vector<double> deviations;
  for (double v : finite) deviations.push_back(std::abs(v - median));
  std::sort(deviations.begin(), deviations.end());
  const double mad = quantile_sorted(deviations, 0.5);
  if (!(mad > 0)) return z;
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (std::isfinite(values[i])) z[i] = (values[i] - median) / (1.4826 * mad);
  }
  return z;
}

double main_sequence_peak_velocity(double amplitude_deg, double v_max_deg_s, double c_deg) {
  return v_max_deg_s * (1.0 - std::exp(-amplitude_deg / c_deg));
}

std::vector<double> bin_means(std::span<const Microseconds> t, std::span<const float> values, std::span<const std::uint8_t> valid,
                              Microseconds from_us, Microseconds to_us, Microseconds bin_us) {
  if (bin_us <= 0 || to_us <= from_us) return {};
  const auto bins = static_cast<std::size_t>((to_us - from_us + bin_us - 1) / bin_us);
  std::vector<double> sum(bins, 0.0);
  std::vector<std::uint32_t> count(bins, 0);
  const std::size_t n = std::min({t.size(), values.size(), valid.size()});
  auto i = static_cast<std::size_t>(std::lower_bound(t.begin(), t.begin() + static_cast<std::ptrdiff_t>(n), from_us) - t.begin());
  // The bin of the last sample's time is kept with its edges: times rise, so
  // a division (slow, and once per sample before) is needed only on entering
  // another bin. A time that went back before from_us has no bin.
  std::size_t b = 0;
  Microseconds lo = from_us, hi = from_us + bin_us;
  for (; i < n && t[i] < to_us; ++i) {
    if (!valid[i] || !std::isfinite(values[i])) continue;
    if (t[i] < lo || t[i] >= hi) {
      if (t[i] < from_us) continue;
      b = static_cast<std::size_t>((t[i] - from_us) / bin_us);
      lo = from_us + static_cast<Microseconds>(b) * bin_us;
      hi = lo + bin_us;
    }
    sum[b] += values[i];
    ++count[b];
  }
  std::vector<double> out(bins, kNaN);
  for (std::size_t b = 0; b < bins; ++b) {
    if (count[b]) out[b] = sum[b] / count[b];
  }
  return out;
}

}  // namespace gazemill
