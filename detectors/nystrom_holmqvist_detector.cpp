#include "detectors/nystrom_holmqvist_detector.h"

#include <algorithm>
#include <cmath>

#include "detectors/saccade_refinement.h"

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
  SaccadeRefinementParams rp;
  rp.onset_threshold_deg_s = onset;
  rp.offset_onset_weight = p_.offset_onset_weight;
  rp.local_noise_window_ms = p_.local_noise_window_ms;
  rp.max_glissade_ms = p_.max_glissade_ms;
  rp.min_saccade_ms = p_.min_saccade_ms;
  std::vector<SampleLabel> out(n, SampleLabel::other);
  refine_saccades(g, v.speed, usable, cores_above(v.speed, usable, pt.peak_deg_s), rp, out);
  for (std::size_t q = 0; q < n; ++q) {
    if (labels[q] != SampleLabel::other) continue;
    if (out[q] != SampleLabel::other) labels[q] = out[q];
    else if (usable[q]) labels[q] = SampleLabel::fixation;
  }
  return {{"peak_threshold_deg_s", pt.peak_deg_s}, {"onset_threshold_deg_s", onset}};
}

}  // namespace gazemill
