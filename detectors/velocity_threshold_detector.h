#pragma once
// I-VT, velocity-threshold identification (Salvucci & Goldberg 2000): a
// sample slower than the threshold is a fixation sample, a faster one a
// saccade sample; runs of fixation samples are fixations.

#include "detectors/event_detector.h"
#include "detectors/velocity.h"

namespace gazemill {

struct VelocityThresholdParams {
  // Salvucci & Goldberg mention 20 deg/s for point-to-point velocities (from
  // memory); with the default smoothed velocity 30 deg/s is common practice, no source.
  double velocity_threshold_deg_s = 30.0;
  VelocityParams velocity;
};

class VelocityThresholdDetector : public EventDetector {
 public:
  explicit VelocityThresholdDetector(VelocityThresholdParams p) : p_(p) {}
  std::string name() const override { return "ivt"; }
  ParameterList parameters() const override;
  ParameterList label(const GazeTrace& trace, std::vector<SampleLabel>& labels) const override;

 private:
  VelocityThresholdParams p_;
};

}  // namespace gazemill
