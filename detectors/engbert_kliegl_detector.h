#pragma once
// Adaptive velocity threshold of Engbert & Kliegl (2003, Vision Research 43):
// velocities from a 5-sample moving average, a median-based estimate of
// their spread per axis, sigma = sqrt(median(v^2) - median(v)^2), and an
// elliptic threshold (vx / (lambda sx))^2 + (vy / (lambda sy))^2 > 1.
// Runs of supra-threshold samples of at least the minimum length are
// saccades; the rest of the valid samples are fixation samples. The
// binocular overlap criterion of the original is for microsaccades and is
// not applied: each eye is detected on its own.

#include "detectors/event_detector.h"

namespace gazemill {

struct EngbertKlieglParams {
  double lambda = 6.0;             // 6 in Engbert & Kliegl 2003; 5 after Engbert & Mergenthaler 2006 (from memory)
  int min_saccade_samples = 3;     // 3 samples (from memory)
  double min_sd_deg_s = 1e-6;      // floor for the spread of a motionless trace
};

class EngbertKlieglDetector : public EventDetector {
 public:
  explicit EngbertKlieglDetector(EngbertKlieglParams p) : p_(p) {}
  std::string name() const override { return "engbert_kliegl"; }
  ParameterList parameters() const override;
  void label(const GazeTrace& trace, std::vector<SampleLabel>& labels) const override;

 private:
  EngbertKlieglParams p_;
};

/// sqrt(median(v^2) - median(v)^2) over the finite values of v.
double median_based_sd(const std::vector<double>& v);

}  // namespace gazemill
