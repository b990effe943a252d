#pragma once
// merge (Carr et al. 2022, "Merge", after Spakov et al. 2019, Behavior
// Research Methods 51): the sequence is first cut into progressive runs (a
// new run at every leftward saccade or large vertical jump); runs are then
// merged, pair by pair, the pair whose joint regression line fits best
// first, in phases that relax which runs may merge: long runs with long ones
// under a gradient and an error limit (and, ours, a limit on how far apart
// their mean y may be), then short with long, then any two,
// then without limits, until as many runs are left as the text has lines.
// The runs, ordered by mean y, go to the lines from the top. Assumes every
// line was read.

#include "alignment/drift_corrector.h"

namespace gazemill {

struct MergeParams {
  // A vertical jump above this starts a new run: one line height is our choice
  // (Carr et al. use 32 px, from memory).
  double y_threshold_line_heights = 1.0;
  // A merged run's regression line must be flatter than this (px per px):
  // 0.1 as Carr et al. give it (from memory).
  double max_gradient = 0.1;
  // ...and its root-mean-square residual below this: Carr et al. use 20 px
  // (from memory); 0.4 line heights is our choice, below the about half a line
  // height that the fixations of two neighbouring lines give when fitted together.
  double max_error_line_heights = 0.4;
  // ...and, our addition (not in the method as we recall it), the two runs'
  // mean y may differ by at most this. Without it, two runs of neighbouring
  // lines that do not overlap in x (the end of one line, the start of the
  // next) fit one tilted line within both limits and were merged while short
  // runs kept the count above the number of lines: 95-97 % of fixations right
  // on undistorted simulated passages against 100 % with it (bench/align).
  // A large value restores the method as published.
  double max_mean_y_difference_line_heights = 0.5;
};

class MergeCorrector : public DriftCorrector {
 public:
  explicit MergeCorrector(MergeParams p = {}) : p_(p) {}
  std::string name() const override { return "merge"; }
  DriftParameters parameters() const override;

 protected:
  Assignment assign(const DriftInput& input) const override;

 private:
  MergeParams p_;
};

}  // namespace gazemill
