#include "detectors/velocity_threshold_detector.h"

#include <cmath>

namespace gazemill {

ParameterList VelocityThresholdDetector::parameters() const {
  return {{"velocity_threshold_deg_s", p_.velocity_threshold_deg_s},
          {"sg_window_ms", p_.velocity.sg_window_ms},
          {"sg_order", static_cast<double>(p_.velocity.sg_order)}};
}

ParameterList VelocityThresholdDetector::label(const GazeTrace& g, std::vector<SampleLabel>& labels) const {
  VelocityParams vp = p_.velocity;
  vp.with_components = false;  // the speed is all I-VT needs
  const Velocity v = compute_velocity(g, vp);
  const double threshold = p_.velocity_threshold_deg_s;
  for (std::size_t i = 0; i < labels.size(); ++i) {
    if (labels[i] != SampleLabel::other || !(v.speed[i] == v.speed[i])) continue;  // keep gaps and broken windows
    labels[i] = v.speed[i] < threshold ? SampleLabel::fixation : SampleLabel::saccade;
  }
  return {};  // a fixed threshold: nothing set from the data
}

}  // namespace gazemill
