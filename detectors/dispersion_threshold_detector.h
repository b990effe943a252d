#pragma once
// I-DT, dispersion-threshold identification (Salvucci & Goldberg 2000):
// a window covering the minimum duration whose dispersion
// D = (max x - min x) + (max y - min y) is within the threshold starts a
// fixation, which grows sample by sample until the next sample would push D
// over the threshold; samples outside fixations are saccade samples.

#include "detectors/event_detector.h"

namespace gazemill {

struct DispersionThresholdParams {
  // 1 deg: the usual order of value (Blignaut 2009 found a 1 deg fixation
  // *radius* replicable, a different measure). Too coarse for reading, whose
  // saccades span 1-2 deg: see README, "Event detection".
  double dispersion_threshold_deg = 1.0;
  double min_duration_ms = 100.0;         // typical 100-200 ms (from memory)
  // 0 = the paper's raw samples. Otherwise each coordinate is first smoothed
  // by a Savitzky-Golay fit (order 2) over this many ms, so that the window's
  // dispersion measures the eye rather than the tracker's sample noise.
  double smoothing_window_ms = 0.0;
};

class DispersionThresholdDetector : public EventDetector {
 public:
  explicit DispersionThresholdDetector(DispersionThresholdParams p) : p_(p) {}
  std::string name() const override { return "idt"; }
  ParameterList parameters() const override;
  void label(const GazeTrace& trace, std::vector<SampleLabel>& labels) const override;

 private:
  DispersionThresholdParams p_;
};

/// The number of samples the first window covers: ceil(min_duration / interval).
std::size_t dispersion_window_samples(double min_duration_ms, double interval_us);

/// The smoothing window in samples: rounded, made odd, at least 5; 0 when off.
int smoothing_window_samples(double smoothing_window_ms, double interval_us);

}  // namespace gazemill
