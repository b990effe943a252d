#pragma once
// regress (Carr et al. 2022, "Regress", after Cohen 2013, Behavior Research
// Methods 45(3)): the text's lines, each tilted by one shared slope and moved
// by one shared offset, are fitted to the fixations as a mixture of normal
// distributions with one shared standard deviation; each fixation goes to
// the line most likely to have produced it. Handles slope and offset, not
// drift that grows down the page (shift), and it ignores time order, so
// regressions do not harm it.

#include "alignment/drift_corrector.h"

namespace gazemill {

struct RegressParams {
  // Bounds of the fitted parameters. Slope +-0.1 px per px and a standard
  // deviation of 1..20 px are the bounds Carr et al. give for Cohen's method
  // (from memory). The offset bound, +-50 px there (from memory), is written
  // here in line heights so that it scales with the text: half a line height
  // either way is our choice, the widest offset that cannot pass a whole line
  // of fixations to its neighbour.
  double max_slope = 0.1;                   // px of drift per px of x, measured from the leftmost word centre
  double max_offset_line_heights = 0.5;
  double min_sd_px = 1.0;
  double max_sd_px = 20.0;
};

class RegressCorrector : public DriftCorrector {
 public:
  explicit RegressCorrector(RegressParams p = {}) : p_(p) {}
  std::string name() const override { return "regress"; }
  DriftParameters parameters() const override;

 protected:
  Assignment assign(const DriftInput& input) const override;

 private:
  RegressParams p_;
};

}  // namespace gazemill
