#pragma once
// split (Carr et al. 2022, "Split", one of their two new methods): the
// saccades are divided by two-means on their (dx, dy) vectors into return
// sweeps (the group of the more leftward saccades) and the rest; the
// sequence is cut at the return sweeps and each piece goes, whole, to the
// line nearest its mean y. Unlike segment it does not need exactly m - 1
// sweeps, so rereading a line does not shift the rest.

#include "alignment/drift_corrector.h"

namespace gazemill {

class SplitCorrector : public DriftCorrector {
 public:
  std::string name() const override { return "split"; }
  DriftParameters parameters() const override { return {}; }

 protected:
  Assignment assign(const DriftInput& input) const override;
};

}  // namespace gazemill
