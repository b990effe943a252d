#pragma once
// compare (Carr et al. 2022, "Compare", after Lima Sanches et al. 2015): the
// fixation sequence is cut into "gaze lines" at long leftward saccades; the
// x positions of each gaze line are compared, by dynamic time warping, with
// the word centres of the few text lines nearest its mean y, and the gaze
// line goes, whole, to the most similar. Needs lines whose word patterns
// differ; on lines of similar length it chooses almost at random among the
// candidates.

#include "alignment/drift_corrector.h"

namespace gazemill {

struct CompareParams {
  // A leftward saccade longer than this share of the widest line (distance
  // from its first to its last word centre) starts a gaze line. Carr et al.
  // use a fixed 512 px (from memory); a share of the text is our choice.
  double gaze_line_break_line_share = 0.5;
  // Text lines compared with each gaze line, the nearest first: 3 as Carr et
  // al. give it (from memory).
  int candidate_lines = 3;
};

class CompareCorrector : public DriftCorrector {
 public:
  explicit CompareCorrector(CompareParams p = {}) : p_(p) {}
  std::string name() const override { return "compare"; }
  DriftParameters parameters() const override;

 protected:
  /// Throws std::invalid_argument when the text has no words.
  Assignment assign(const DriftInput& input) const override;

 private:
  CompareParams p_;
};

}  // namespace gazemill
