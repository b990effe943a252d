#pragma once
// chain (Carr et al. 2022, "Chain"): consecutive fixations no further apart
// than an x and a y threshold (a step of exactly a threshold stays in the
// chain, our choice) form a chain; each chain goes, whole, to the line nearest
// the mean y of its fixations. Assumes drift changes little within a run of
// short saccades. Thresholds too low make it attach; too high, and fixations
// of several lines are forced onto one.

#include "alignment/drift_corrector.h"

namespace gazemill {

struct ChainParams {
  // Carr et al. (2022, "Chain") report these defaults of the implementation
  // they based chain on: x 20 and y 2 times the font height.
  double x_threshold_font_heights = 20.0;
  double y_threshold_font_heights = 2.0;
};

class ChainCorrector : public DriftCorrector {
 public:
  explicit ChainCorrector(ChainParams p = {}) : p_(p) {}
  std::string name() const override { return "chain"; }
  DriftParameters parameters() const override;

 protected:
  Assignment assign(const DriftInput& input) const override;

 private:
  ChainParams p_;
};

}  // namespace gazemill
