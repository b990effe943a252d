#include "detectors/engbert_kliegl_detector.h"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>

#include "detectors/median.h"
#include "detectors/nystrom_holmqvist_detector.h"
#include "detectors/saccade_refinement.h"
#include "detectors/velocity.h"

namespace gazemill {
double median_based_sd(const std::vector<double>& v) {
  std::vector<double> finite;
  finite.reserve(v.size());
  for (double x : v) {
    if (std::isfinite(x)) finite.push_back(x);
  }
  if (finite.empty()) return 0.0;
  const double m = median_in_place(finite);
  // The middle squares are the squares of the middle magnitudes; magnitudes
  // spread less than squares, which keeps the median search narrow.
  for (double& x : finite) x = std::abs(x);
  const MiddlePair a = middle_pair_in_place(finite);
  const double median_square = finite.size() % 2 ? a.upper * a.upper : 0.5 * (a.upper * a.upper + a.lower * a.lower);
  return std::sqrt(std::max(0.0, median_square - m * m));
}

int moving_average_half_width(double window_ms, double interval_us) {
  if (!(window_ms > 0) || !(interval_us > 0)) return 2;
  return std::max(2, static_cast<int>(std::lround(window_ms * 1000.0 / interval_us / 2.0)));
}

ParameterList EngbertKlieglDetector::parameters() const {
  return {{"lambda", p_.lambda},
          {"min_saccade_samples", static_cast<double>(p_.min_saccade_samples)},
          {"velocity_window_ms", p_.velocity_window_ms},
          {"onset_sd_factor", p_.onset_sd_factor},
          {"offset_onset_weight", p_.offset_onset_weight},
          {"local_noise_window_ms", p_.local_noise_window_ms},
          {"max_glissade_ms", p_.max_glissade_ms},
          {"glissades", p_.glissades}};
}

ParameterList EngbertKlieglDetector::label(const GazeTrace& g, std::vector<SampleLabel>& labels) const {
  VelocityParams vp;
  vp.method = VelocityMethod::moving_average;
  vp.moving_average_half_width = moving_average_half_width(p_.velocity_window_ms, g.interval_us);
  vp.with_speed = false;  // the elliptic criterion uses the components
  const Velocity v = compute_velocity(g, vp);
  const double eta_x = p_.lambda * std::max(p_.min_sd_deg_s, median_based_sd(v.vx));
  const double eta_y = p_.lambda * std::max(p_.min_sd_deg_s, median_based_sd(v.vy));
  const std::size_t n = labels.size();
  const double kx = 1.0 / (eta_x * eta_x), ky = 1.0 / (eta_y * eta_y);
  std::vector<std::uint8_t> above(n, 0);
  for (std::size_t i = 0; i < n; ++i) {
    const double vx = v.vx[i], vy = v.vy[i];
    if (!std::isfinite(vx)) continue;
    above[i] = vx * vx * kx + vy * vy * ky > 1.0;
    if (labels[i] == SampleLabel::other) labels[i] = SampleLabel::fixation;
  }
  // Runs of supra-threshold samples long enough are saccades.
  std::vector<SaccadeCore> cores;
  std::size_t i = 0;
  while (i < n) {
    if (!above[i]) {
      ++i;
      continue;
    }
    std::size_t j = i;
    while (j < n && above[j]) ++j;
    if (j - i >= static_cast<std::size_t>(p_.min_saccade_samples)) {
      for (std::size_t k = i; k < j; ++k) {
        if (labels[k] == SampleLabel::fixation) labels[k] = SampleLabel::saccade;
      }
      cores.push_back({i, j - 1});
    }
    i = j;
  }
  const bool refine = p_.onset_sd_factor > 0;
  if ((!refine && !(p_.glissades > 0 && p_.max_glissade_ms > 0)) || cores.empty()) return {{"threshold_x_deg_s", eta_x}, {"threshold_y_deg_s", eta_y}};
  std::vector<double> speed(n, 0.0);
  std::vector<bool> usable(n, false), still(n, false);
  for (std::size_t k = 0; k < n; ++k) {
    usable[k] = labels[k] == SampleLabel::fixation || labels[k] == SampleLabel::saccade;
    if (usable[k]) speed[k] = std::sqrt(v.vx[k] * v.vx[k] + v.vy[k] * v.vy[k]);
    still[k] = usable[k] && !above[k];
  }
  const SpeedSpread fix = speed_spread_below(speed, still, std::numeric_limits<double>::infinity());
  SaccadeRefinementParams rp;
  rp.onset_threshold_deg_s = fix.mean_deg_s + (refine ? p_.onset_sd_factor : NystromHolmqvistParams{}.onset_sd_factor) * fix.sd_deg_s;
  rp.walk_boundaries = refine;
  rp.offset_onset_weight = p_.offset_onset_weight;
  rp.local_noise_window_ms = p_.local_noise_window_ms;
  rp.max_glissade_ms = p_.max_glissade_ms;
  std::vector<SampleLabel> out(n, SampleLabel::other);
  refine_saccades(g, speed, usable, cores, rp, out);
  for (std::size_t k = 0; k < n; ++k) {
    if (usable[k] && out[k] != SampleLabel::other) labels[k] = out[k];
  }
  return {{"threshold_x_deg_s", eta_x}, {"threshold_y_deg_s", eta_y}, {"onset_threshold_deg_s", rp.onset_threshold_deg_s}};
}

}  // namespace gazemill
