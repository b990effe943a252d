#pragma once
// cluster (Carr et al. 2022, "Cluster"): the fixations' y values are grouped
// by k-means into as many groups as the text has lines; the groups, ordered
// by mean y, go to the lines from the top in that order. Ignores x and time
// order, so it survives regressions, but assumes every line was read and
// breaks when drift tilts lines into each other (slope).

#include "alignment/drift_corrector.h"

namespace gazemill {

class ClusterCorrector : public DriftCorrector {
 public:
  std::string name() const override { return "cluster"; }
  DriftParameters parameters() const override { return {}; }

 protected:
  // Optimal one-dimensional k-means (alignment/k_means.h) instead of the
  // randomly started k-means of the original (from memory): deterministic,
  // and never worse in k-means' own criterion. With fewer fixations than
  // lines, each fixation is its own group and the groups take the top lines.
  Assignment assign(const DriftInput& input) const override;
};

}  // namespace gazemill
