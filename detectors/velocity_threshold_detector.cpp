#include "detectors/velocity_threshold_detector.h"

#include <algorithm>
#include <cmath>

#include "detectors/nystrom_holmqvist_detector.h"
#include "detectors/saccade_refinement.h"

namespace gazemill {

ParameterList VelocityThresholdDetector::parameters() const {
  return {{"velocity_threshold_deg_s", p_.velocity_threshold_deg_s},
          {"sg_window_ms", p_.velocity.sg_window_ms},
          {"sg_order", static_cast<double>(p_.velocity.sg_order)},
          {"onset_sd_factor", p_.onset_sd_factor},
          {"offset_onset_weight", p_.offset_onset_weight},
          {"local_noise_window_ms", p_.local_noise_window_ms},
          {"max_glissade_ms", p_.max_glissade_ms},
          {"glissades", p_.glissades}};
}

ParameterList VelocityThresholdDetector::label(const GazeTrace& g, std::vector<SampleLabel>& labels) const {
  VelocityParams vp = p_.velocity;
  vp.with_components = false;  // the speed is all I-VT needs
  const Velocity v = compute_velocity(g, vp);
  const double threshold = p_.velocity_threshold_deg_s;
  const std::size_t n = labels.size();
  std::vector<bool> usable(n, false);
  for (std::size_t i = 0; i < n; ++i) {
    if (labels[i] != SampleLabel::other || !(v.speed[i] == v.speed[i])) continue;  // keep gaps and broken windows
    usable[i] = true;
    // Below the threshold a fixation sample; at it or above, a saccade sample.
    labels[i] = v.speed[i] < threshold ? SampleLabel::fixation : SampleLabel::saccade;
  }
  const bool refine = p_.onset_sd_factor > 0;
  if (!refine && !(p_.glissades > 0 && p_.max_glissade_ms > 0)) return {};  // a fixed threshold: nothing set from the data
  const SpeedSpread fix = speed_spread_below(v.speed, usable, threshold);
  if (fix.samples < 2) return {};
  SaccadeRefinementParams rp;
  const double sd_factor = refine ? p_.onset_sd_factor : NystromHolmqvistParams{}.onset_sd_factor;
  rp.onset_threshold_deg_s = std::min(threshold, fix.mean_deg_s + sd_factor * fix.sd_deg_s);
  rp.walk_boundaries = refine;
  rp.offset_onset_weight = p_.offset_onset_weight;
  rp.local_noise_window_ms = p_.local_noise_window_ms;
  rp.max_glissade_ms = p_.max_glissade_ms;
  std::vector<SaccadeCore> cores;
  for (std::size_t i = 0; i < n;) {
    if (!usable[i] || labels[i] != SampleLabel::saccade) {
      ++i;
      continue;
    }
    std::size_t j = i;
    while (j + 1 < n && usable[j + 1] && labels[j + 1] == SampleLabel::saccade) ++j;
    cores.push_back({i, j});
    i = j + 1;
  }
  std::vector<SampleLabel> out(n, SampleLabel::other);
  refine_saccades(g, v.speed, usable, cores, rp, out);
  for (std::size_t i = 0; i < n; ++i) {
    if (usable[i] && out[i] != SampleLabel::other) labels[i] = out[i];
  }
  return {{"onset_threshold_deg_s", rp.onset_threshold_deg_s}};
}

}  // namespace gazemill
