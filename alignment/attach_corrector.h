#pragma once
// attach (Carr et al. 2022, "Attach"): every fixation goes to its nearest
// line. No correction at all, the baseline every other method is measured
// against; it fails as soon as drift exceeds half a line height.

#include "alignment/drift_corrector.h"

namespace gazemill {

class AttachCorrector : public DriftCorrector {
 public:
  std::string name() const override { return "attach"; }
  DriftParameters parameters() const override { return {}; }

 protected:
  Assignment assign(const DriftInput& input) const override { return {nearest_lines(input), {}}; }
};

}  // namespace gazemill
