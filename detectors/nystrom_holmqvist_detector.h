#pragma once
// The adaptive algorithm of Nystrom & Holmqvist (2010, Behavior Research
// Methods 42(1)): Savitzky-Golay velocity and acceleration; physiologically
// impossible samples are noise; a data-driven peak threshold
// PT = mean + 6 SD of the velocities below PT, iterated to convergence;
// saccade onset walking back from each peak while the velocity stays at or
// above mean + 3 SD (the paper walks on to a local minimum below it; our
// change, detectors/saccade_refinement.cpp); offset at a threshold mixing
// the onset threshold with the local noise before the saccade, walking
// forward to the next local minimum (the slowest sample, still at rest, so
// it stays out of the saccade); a glissade (post-saccadic oscillation) is a
// velocity bump above the offset threshold within a short window after the
// offset that comes back to rest before any lost sample. All numbers but the filter window (below) are the paper's as
// recalled (from memory; see methods.md section 3); each is a parameter.

#include "detectors/event_detector.h"
#include "detectors/velocity.h"

namespace gazemill {

struct NystromHolmqvistParams {
  // The paper starts the iteration at 100-300 deg/s (from memory). Reading
  // saccades of 1-2 deg peak near or below 100 deg/s (main sequence, from
  // memory), and when they are many the iteration can settle near its
  // start, above them: 60 lets it settle below them (README, "Event detection").
  double initial_peak_threshold_deg_s = 60.0;
  double peak_sd_factor = 6.0;
  double onset_sd_factor = 3.0;
  double convergence_deg_s = 1.0;
  double max_velocity_deg_s = 1000.0;
  double max_acceleration_deg_s2 = 100000.0;
  double local_noise_window_ms = 40.0;
  double offset_onset_weight = 0.7;   // offset threshold = w * onset + (1 - w) * local noise threshold
  double max_glissade_ms = 40.0;      // 0 turns glissade labelling off
  double min_saccade_ms = 10.0;
  // Savitzky-Golay, 2nd order, over 10 ms: the minimum saccade duration. The
  // paper used about 20 ms, twice that (from memory); a window that long draws
  // out the velocity of short reading saccades, so their onsets come early and
  // their offsets late. sg_window_ms = 20 gives the paper's filter.
  VelocityParams velocity{.method = VelocityMethod::savitzky_golay, .sg_window_ms = 10.0, .sg_order = 2,
                          .with_acceleration = true};
};

class NystromHolmqvistDetector : public EventDetector {
 public:
  explicit NystromHolmqvistDetector(NystromHolmqvistParams p) : p_(p) {}
  std::string name() const override { return "nystrom_holmqvist"; }
  ParameterList parameters() const override;
  ParameterList label(const GazeTrace& trace, std::vector<SampleLabel>& labels) const override;

 private:
  NystromHolmqvistParams p_;
};

/// The converged peak threshold and the mean and SD below it.
struct PeakThreshold {
  double peak_deg_s = 0, mean_deg_s = 0, sd_deg_s = 0;
  int iterations = 0;
};
PeakThreshold find_peak_threshold(const std::vector<double>& speed, const std::vector<bool>& usable,
                                  const NystromHolmqvistParams& p);

}  // namespace gazemill
