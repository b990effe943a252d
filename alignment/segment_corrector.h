#pragma once
// segment (Carr et al. 2022, "Segment", after Abdulin & Komogortsev 2015):
// the m - 1 longest leftward saccades of a text of m lines are taken for the
// return sweeps; the m segments they cut go to lines 1..m in order. Assumes
// each line is read once, in order: a between-line regression or a line read
// twice shifts every later segment.

#include "alignment/drift_corrector.h"

namespace gazemill {

class SegmentCorrector : public DriftCorrector {
 public:
  std::string name() const override { return "segment"; }
  DriftParameters parameters() const override { return {}; }

 protected:
  Assignment assign(const DriftInput& input) const override;
};

}  // namespace gazemill
