#pragma once
// Combining methods: each fixation goes to the line most of the methods gave
// it, and the trial's confidence is how far they agree.

#include <memory>
#include <vector>

#include "alignment/drift_corrector.h"

namespace gazemill {

struct MajorityVote {
  std::vector<int> line;                 // per fixation, the line given by most members
  std::vector<double> agreement_share;   // per fixation, the share of members that gave that line
  // Mean of agreement_share: 1 when all members agree on every fixation,
  // 1/k when k members never agree; 1 without fixations. Our definition, no source.
  double confidence = 1.0;
};

/// `member_lines[k][i]` is member k's line for fixation i; every member has
/// the same number of fixations (std::invalid_argument otherwise, or with no
/// member). Tie rule: among lines with equally many votes, the line of the
/// first-listed member that gave one of them wins (our choice: list members
/// by trust).
MajorityVote majority_vote(const std::vector<std::vector<int>>& member_lines);

/// A method that runs its members and takes the majority per fixation. Its
/// fit holds the shared values for the combined lines, `member_count`,
/// `agreement_share` (majority_vote's confidence), per member
/// `<member>_agreement_share` (the share of fixations where that member gave
/// the combined line), and `confidence`: the mean over fixations of the
/// fixation's agreement share times its fixation_confidence (our definition,
/// no source), so that a trial scores low when the members disagree or when
/// the combined lines leave much unexplained by a smooth drift (noise, or
/// lines that do not fit the others' drift).
class MajorityCorrector : public DriftCorrector {
 public:
  /// At least one member (std::invalid_argument otherwise); the order is the tie order.
  explicit MajorityCorrector(std::vector<std::unique_ptr<DriftCorrector>> members);
  std::string name() const override { return "majority"; }
  /// Each member's parameters as "<member>.<parameter>", and member_count.
  DriftParameters parameters() const override;
  const std::vector<std::unique_ptr<DriftCorrector>>& members() const { return members_; }

 protected:
  Assignment assign(const DriftInput& input) const override;
  DriftOutput finish(const DriftInput& input, Assignment a) const override;

 private:
  std::vector<std::unique_ptr<DriftCorrector>> members_;
};

}  // namespace gazemill
