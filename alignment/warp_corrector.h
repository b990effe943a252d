#pragma once
// warp (Carr et al. 2022, "Warp", one of their two new methods): the
// fixation sequence is aligned by dynamic time warping, with Euclidean
// distance as the local cost, to the sequence of word centres the text would
// give if read once in order (lines top to bottom, words left to right, each
// word centre at its line's centre y). Each fixation goes to the line of the
// word centres it is aligned with (the most frequent line among them; on a
// tie the earlier line, our choice). Robust to every kind of drift that keeps
// the reading order; assumes that order, so between-line regressions and
// lines read twice pull fixations onto the wrong line.

#include "alignment/drift_corrector.h"

namespace gazemill {

class WarpCorrector : public DriftCorrector {
 public:
  std::string name() const override { return "warp"; }
  DriftParameters parameters() const override { return {}; }

 protected:
  /// O(n*m) time and memory for n fixations and m words. Throws
  /// std::invalid_argument when the text has no words.
  Assignment assign(const DriftInput& input) const override;
};

}  // namespace gazemill
