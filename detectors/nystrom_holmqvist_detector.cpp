#include "detectors/nystrom_holmqvist_detector.h"

#include <algorithm>
#include <cmath>

namespace gazemill {

ParameterList NystromHolmqvistDetector::parameters() const {
  return {{"initial_peak_threshold_deg_s", p_.initial_peak_threshold_deg_s},
          {"peak_sd_factor", p_.peak_sd_factor},
          {"onset_sd_factor", p_.onset_sd_factor},
          {"max_velocity_deg_s", p_.max_velocity_deg_s},
          {"max_acceleration_deg_s2", p_.max_acceleration_deg_s2},
          {"local_noise_window_ms", p_.local_noise_window_ms},
          {"offset_onset_weight", p_.offset_onset_weight},
          {"max_glissade_ms", p_.max_glissade_ms},
          {"min_saccade_ms", p_.min_saccade_ms},
          {"sg_window_ms", p_.velocity.sg_window_ms},
          {"sg_order", static_cast<double>(p_.velocity.sg_order)}};
}

PeakThreshold find_peak_threshold(const std::vector<double>& speed, const std::vector<bool>& usable,
                                  const NystromHolmqvistParams& p) {
  PeakThreshold t;
  t.peak_deg_s = p.initial_peak_threshold_deg_s;
  for (t.iterations = 1; t.iterations <= 200; ++t.iterations) {
    double sum = 0, sum2 = 0;
    long n = 0;
    for (std::size_t i = 0; i < speed.size(); ++i) {
      if (usable[i] && speed[i] < t.peak_deg_s) {
        sum += speed[i];
        sum2 += speed[i] * speed[i];
        ++n;
      }
    }
    if (n < 2) break;
    t.mean_deg_s = sum / n;
    t.sd_deg_s = std::sqrt(std::max(0.0, sum2 / n - t.mean_deg_s * t.mean_deg_s));
    const double next = t.mean_deg_s + p.peak_sd_factor * t.sd_deg_s;
    const bool done = std::abs(next - t.peak_deg_s) < p.convergence_deg_s;
    t.peak_deg_s = next;
    if (done) break;
  }
  return t;
}

ParameterList NystromHolmqvistDetector::label(const GazeTrace& g, std::vector<SampleLabel>& labels) const {
  const std::size_t n = labels.size();
  if (n < 3) return {};
  const Velocity v = compute_velocity(g, p_.velocity);
  std::vector<bool> usable(n, false);
  for (std::size_t i = 0; i < n; ++i) {
    const bool physiological = std::isfinite(v.speed[i]) && v.speed[i] <= p_.max_velocity_deg_s &&
                               !(!v.acceleration.empty() && v.acceleration[i] > p_.max_acceleration_deg_s2);
    usable[i] = labels[i] == SampleLabel::other && physiological;
  }
  const PeakThreshold pt = find_peak_threshold(v.speed, usable, p_);
  const double onset = pt.mean_deg_s + p_.onset_sd_factor * pt.sd_deg_s;
  const auto samples = [&](double ms) { return static_cast<std::size_t>(std::max(1.0, std::round(ms * 1000.0 / g.interval_us))); };
  const std::size_t noise_window = samples(p_.local_noise_window_ms);
  // 0 ms turns glissade labelling off (samples() would round it up to one).
  const std::size_t glissade_window = p_.max_glissade_ms > 0 ? samples(p_.max_glissade_ms) : 0;
  const std::vector<double>& s = v.speed;

  std::vector<SampleLabel> out(n, SampleLabel::other);
  std::size_t i = 0;
  std::size_t last_end = 0;
  while (i < n) {
    if (!(usable[i] && s[i] > pt.peak_deg_s)) {
      ++i;
      continue;
    }
    std::size_t peak_end = i;
    while (peak_end + 1 < n && usable[peak_end + 1] && s[peak_end + 1] > pt.peak_deg_s) ++peak_end;
    // Onset: back to the first local minimum below the onset threshold. The
    // minimum is the slowest sample, the last one still at rest, so the
    // saccade starts after it (the paper leaves the side open; from memory).
    std::size_t a = i;
    auto minimum_before = [&](std::size_t q) { return q > last_end && usable[q - 1] && s[q] < onset && s[q - 1] >= s[q]; };
    while (a > last_end && usable[a - 1] && !minimum_before(a)) --a;
    const std::size_t first = minimum_before(a) ? a + 1 : a;  // stopped by missing data or the last saccade: keep a
    // Offset threshold from the noise just before the saccade.
    double m = 0, m2 = 0;
    std::size_t k = 0;
    for (std::size_t q = a > noise_window ? a - noise_window : 0; q < a; ++q) {
      if (usable[q]) {
        m += s[q];
        m2 += s[q] * s[q];
        ++k;
      }
    }
    double local = onset;
    if (k > 1) {
      const double mean = m / static_cast<double>(k);
      local = mean + 3.0 * std::sqrt(std::max(0.0, m2 / static_cast<double>(k) - mean * mean));
    }
    const double offset = p_.offset_onset_weight * onset + (1.0 - p_.offset_onset_weight) * local;
    // Offset: forward to the first local minimum below the offset threshold;
    // the minimum is again the first sample at rest, not part of the saccade.
    std::size_t b = peak_end;
    auto minimum_after = [&](std::size_t q) { return q + 1 < n && usable[q + 1] && s[q] < offset && s[q + 1] >= s[q]; };
    while (b + 1 < n && usable[b + 1] && !minimum_after(b)) ++b;
    const std::size_t last = minimum_after(b) && b > first ? b - 1 : b;
    if ((static_cast<double>(g.time_us[last] - g.time_us[first]) + g.interval_us) / 1000.0 >= p_.min_saccade_ms) {
      for (std::size_t q = first; q <= last; ++q) out[q] = SampleLabel::saccade;
      // Glissade: a velocity bump above the offset threshold soon after the
      // offset. It runs from the saccade's end to the next local minimum,
      // which again is at rest. A bump that runs into lost data is no
      // glissade: velocity fitted at the edge of a stretch is noisy, and a
      // single lost sample (a removed spike) would otherwise turn the
      // fixation before it into a glissade.
      std::size_t last_above = b;
      for (std::size_t q = b + 1; q < n && q <= b + glissade_window && usable[q]; ++q) {
        if (s[q] > offset) last_above = q;
      }
      if (last_above > b) {
        std::size_t e = last_above;
        while (e + 1 < n && usable[e + 1] && !minimum_after(e)) ++e;
        if (minimum_after(e)) {
          for (std::size_t q = last + 1; q < e; ++q) out[q] = SampleLabel::pso;  // e, the minimum, is at rest
          b = e;
        }
      }
    }
    last_end = b + 1;
    i = std::max(peak_end, b) + 1;
  }
  for (std::size_t q = 0; q < n; ++q) {
    if (labels[q] != SampleLabel::other) continue;
    if (out[q] != SampleLabel::other) labels[q] = out[q];
    else if (usable[q]) labels[q] = SampleLabel::fixation;
  }
  return {{"peak_threshold_deg_s", pt.peak_deg_s}, {"onset_threshold_deg_s", onset}};
}

}  // namespace gazemill
