#pragma once
// stretch (Carr et al. 2022, "Stretch", after Lohmeier 2015): the fixations'
// y values are scaled and moved, y' = y0 + k (y - y0) + offset, by the k and
// offset that bring them nearest the lines (least summed absolute distance),
// then attached. Handles drift that grows down the page (shift) and offset;
// not slope, which tilts lines rather than spreading them.

#include "alignment/drift_corrector.h"

namespace gazemill {

struct StretchParams {
  // k in 0.9..1.1 as Carr et al. give it (from memory). They scale about the
  // screen's top; we scale about the first line's centre y0 (our choice), so
  // that the offset bound means the same wherever the text sits. Offset: their
  // +-50 px (from memory) written in line heights; half a line height either
  // way is our choice, as for regress.
  double min_stretch = 0.9;
  double max_stretch = 1.1;
  double max_offset_line_heights = 0.5;
};

class StretchCorrector : public DriftCorrector {
 public:
  explicit StretchCorrector(StretchParams p = {}) : p_(p) {}
  std::string name() const override { return "stretch"; }
  DriftParameters parameters() const override;

 protected:
  Assignment assign(const DriftInput& input) const override;

 private:
  StretchParams p_;
};

}  // namespace gazemill
