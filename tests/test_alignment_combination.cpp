// Combining drift-correction methods by a per-fixation majority, and the
// confidence values the pipeline uses to flag trials. The majority, its tie
// rule and both confidences are our definitions (no source); every expected
// value is worked by hand in the comment above its check.

#include <gtest/gtest.h>

#include <cmath>

#include "alignment/drift_registry.h"
#include "alignment/majority_vote.h"
#include "alignment_fixtures.h"

using namespace gazemill;
using namespace gazemill::alignment_fixtures;

// Three members, three fixations:
//   fixation 0: lines 0, 0, 1 -> 0 with 2 of 3 votes
//   fixation 1: lines 1, 1, 1 -> 1 with 3 of 3
//   fixation 2: lines 2, 1, 2 -> 2 with 2 of 3
// confidence = (2/3 + 1 + 2/3) / 3 = 7/9.
TEST(MajorityVote, HandWorkedVotesAndConfidence) {
  const MajorityVote v = majority_vote({{0, 1, 2}, {0, 1, 1}, {1, 1, 2}});
  EXPECT_EQ(v.line, (std::vector<int>{0, 1, 2}));
  EXPECT_DOUBLE_EQ(v.agreement_share[0], 2.0 / 3.0);
  EXPECT_DOUBLE_EQ(v.agreement_share[1], 1.0);
  EXPECT_DOUBLE_EQ(v.confidence, 7.0 / 9.0);
}

// Tie rule: among equally voted lines, the line of the first-listed member
// that voted for one of them.
TEST(MajorityVote, TiesGoToTheFirstListedMember) {
  EXPECT_EQ(majority_vote({{0}, {1}}).line, std::vector<int>{0});
  EXPECT_EQ(majority_vote({{1}, {0}}).line, std::vector<int>{1});
  EXPECT_EQ(majority_vote({{2}, {0}, {1}}).line, std::vector<int>{2});
  // Lines 1 and 2 have two votes each, line 0 one: member 1 is the first to
  // vote for a tied line, so 1 wins although member 0 comes first.
  EXPECT_EQ(majority_vote({{0}, {1}, {2}, {1}, {2}}).line, std::vector<int>{1});
  EXPECT_DOUBLE_EQ(majority_vote({{0}, {1}, {2}, {1}, {2}}).confidence, 0.4);
}

TEST(MajorityVote, BadMemberListsAreRejected) {
  EXPECT_THROW(majority_vote({}), std::invalid_argument);
  EXPECT_THROW(majority_vote({{0, 1}, {0}}), std::invalid_argument);
  EXPECT_DOUBLE_EQ(majority_vote({{}, {}}).confidence, 1.0);
}

// A single method's confidence: the mean of clamp(1 - |e| / line height, 0, 1),
// e what the fitted drift (offset + slope x + shift y) leaves unexplained.
// Lines at 100 and 150 (height 50); four fixations in one column (x = 100),
// all given line 0, at y = 100, 110, 120, 150. One column on one line
// determines neither slope nor shift, so the drift is the mean displacement,
// offset 20 px, and e = -20, -10, 0, 30: confidences 0.6, 0.8, 1, 0.4, mean
// 0.7. The fixation at 150 is nearest line 1: 1 of 4 moved off its nearest
// line. Root mean squares: of the displacements 0, 10, 20, 50, sqrt(750); of
// e, sqrt(350). By hand.
TEST(DriftConfidence, HandWorkedSingleMethodConfidence) {
  DriftInput in;
  in.text = page({100, 150}, {100});
  for (double y : {100.0, 110.0, 120.0, 150.0}) in.fixations.push_back({100, y, 200});
  EXPECT_DOUBLE_EQ(assignment_confidence(in, {0, 0, 0, 0}), 0.7);
  const DriftOutput out = make_drift_output(in, {0, 0, 0, 0});
  EXPECT_DOUBLE_EQ(out.fit.at("confidence"), 0.7);
  EXPECT_DOUBLE_EQ(out.fit.at("offset_px"), 20.0);
  EXPECT_DOUBLE_EQ(out.fit.at("slope"), 0.0);
  EXPECT_DOUBLE_EQ(out.fit.at("shift"), 0.0);
  EXPECT_DOUBLE_EQ(out.fit.at("moved_off_nearest_share"), 0.25);
  EXPECT_DOUBLE_EQ(out.fit.at("residual_rms_px"), std::sqrt(750.0));
  EXPECT_DOUBLE_EQ(out.fit.at("unexplained_rms_px"), std::sqrt(350.0));
}

// Drift that the model explains does not lower the confidence. Slope
// fixture (methods.md section 9) with its true lines: the displacement is
// 0.1 (x - 100) exactly, so slope 0.1, offset 0, shift 0 and nothing is left
// unexplained: confidence 1 although 6 of 15 fixations left their nearest
// line. Shift fixture (eight lines, y + 0.11 (y - 100), see
// test_alignment_methods.cpp) with its true lines: shift 0.11, confidence 1.
// attach's lines on the slope fixture (hand-derived in
// test_alignment_methods.cpp) put fixations a line away from where the
// others' drift puts them, so its confidence is below 1.
TEST(DriftConfidence, ExplainedDriftKeepsFullConfidence) {
  const DriftText text = page({100, 150, 200}, {100, 300, 500, 700, 900});
  const Scanpath slope = read(text, in_order(text), [](double x, double) { return 0.1 * (x - 100); });
  const DriftOutput right = make_drift_output(slope.input, slope.true_line);
  EXPECT_NEAR(right.fit.at("slope"), 0.1, 1e-12);
  EXPECT_NEAR(right.fit.at("offset_px"), 0.0, 1e-9);
  EXPECT_NEAR(right.fit.at("shift"), 0.0, 1e-12);
  EXPECT_NEAR(right.fit.at("confidence"), 1.0, 1e-12);
  EXPECT_DOUBLE_EQ(right.fit.at("moved_off_nearest_share"), 6.0 / 15.0);
  EXPECT_LT(make_drift_corrector("attach")->correct(slope.input).fit.at("confidence"), 0.9);

  const DriftText eight = page({100, 150, 200, 250, 300, 350, 400, 450}, {100, 500, 900});
  const Scanpath shift = read(eight, in_order(eight), [](double, double y) { return 0.11 * (y - 100); });
  const DriftOutput shifted = make_drift_output(shift.input, shift.true_line);
  EXPECT_NEAR(shifted.fit.at("shift"), 0.11, 1e-12);
  EXPECT_NEAR(shifted.fit.at("slope"), 0.0, 1e-12);
  EXPECT_NEAR(shifted.fit.at("confidence"), 1.0, 1e-12);
}

// The drift model (alignment/drift_output.h: residual = offset + slope (x -
// x0) + shift (line y - y0), least squares) when x and the line are
// correlated, so the two slopes must be told apart. Lines at 100 and 150,
// words at 100, 300, 500 (x0 = 100); line 0 read at x 100 and 300, line 1 at
// 300 and 500, each fixation displaced by 0.1 (x - 100) + 0.2 (line y - 100):
// (u, v, residual) = (0, 0, 0), (200, 0, 20), (200, 50, 30), (400, 50, 50).
// The data lie exactly on the model, so least squares gives slope 0.1,
// shift 0.2, offset 0 and nothing unexplained (numpy.linalg.lstsq on the
// same four rows gives [0, 0.1, 0.2] to 1e-14).
TEST(DriftConfidence, SlopeAndShiftApartWhenXAndLineCorrelate) {
  DriftInput in;
  in.text = page({100, 150}, {100, 300, 500});
  in.fixations = {{100, 100, 200}, {300, 120, 200}, {300, 180, 200}, {500, 200, 200}};
  const DriftOutput out = make_drift_output(in, {0, 0, 1, 1});
  EXPECT_NEAR(out.fit.at("slope"), 0.1, 1e-12);
  EXPECT_NEAR(out.fit.at("shift"), 0.2, 1e-12);
  EXPECT_NEAR(out.fit.at("offset_px"), 0.0, 1e-9);
  EXPECT_NEAR(out.fit.at("unexplained_rms_px"), 0.0, 1e-9);
}

// A majority method reports the vote's confidence, not the distance-based
// one. On the slope fixture of methods.md section 9 (three lines, slope 0.1,
// see test_alignment_methods.cpp), attach gives lines
// [0 0 1 1 2 | 1 1 2 2 2 | 2 2 2 2 2] and warp and segment give the true
// [0 0 0 0 0 | 1 1 1 1 1 | 2 2 2 2 2] (both hand-derived there). A majority
// of attach, warp, segment: the true lines, with 3 of 3 votes on the 9
// fixations where attach is right and 2 of 3 on the other 6:
// agreement = (9 + 6 x 2/3) / 15 = 13/15; attach agrees on 9/15. The true
// lines leave nothing unexplained (previous test), so every fixation's
// confidence is 1 and the majority's confidence is the agreement, 13/15.
TEST(MajorityCorrector, VotesOfItsMembersAndTheirAgreement) {
  const DriftText text = page({100, 150, 200}, {100, 300, 500, 700, 900});
  const Scanpath s = read(text, in_order(text), [](double x, double) { return 0.1 * (x - 100); });
  const auto majority = make_majority_corrector({"attach", "warp", "segment"});
  const DriftOutput out = majority->correct(s.input);
  EXPECT_EQ(out.line, s.true_line);
  EXPECT_NEAR(out.fit.at("confidence"), 13.0 / 15.0, 1e-12);
  EXPECT_DOUBLE_EQ(out.fit.at("agreement_share"), 13.0 / 15.0);
  EXPECT_DOUBLE_EQ(out.fit.at("attach_agreement_share"), 9.0 / 15.0);
  EXPECT_DOUBLE_EQ(out.fit.at("warp_agreement_share"), 1.0);
  EXPECT_DOUBLE_EQ(out.fit.at("member_count"), 3.0);
  // With attach listed first and only warp beside it, each of the 6 split
  // votes is a tie, and the tie goes to attach.
  const DriftOutput tied = make_majority_corrector({"attach", "warp"})->correct(s.input);
  EXPECT_EQ(tied.line, make_drift_corrector("attach")->correct(s.input).line);
  EXPECT_DOUBLE_EQ(tied.fit.at("agreement_share"), (9.0 + 6.0 * 0.5) / 15.0);
  EXPECT_LT(tied.fit.at("confidence"), tied.fit.at("agreement_share"));
}

// The pipeline's default must be safe on single-line sentences (our
// requirement): on an undistorted one-line sentence it changes nothing, and
// with every fixation scattered up to 60 px off the line it still keeps
// every fixation on the line, so it never undoes what attach gets right.
TEST(MajorityCorrector, TheDefaultChangesNothingOnOneLine) {
  const DriftText text = page({300}, {120, 200, 290, 400, 480, 560, 700});
  const Scanpath clean = read(text, {{0, 0}, {0, 1}, {0, 2}, {0, 1}, {0, 3}, {0, 5}, {0, 4}, {0, 6}});
  const auto def = make_drift_corrector(kDefaultDriftMethod);
  EXPECT_EQ(def->correct(clean.input).line, make_drift_corrector("attach")->correct(clean.input).line);
  EXPECT_EQ(def->correct(clean.input).line, clean.true_line);
  Scanpath scattered = clean;
  const double dy[] = {-60, 45, 10, -35, 60, -5, 25, -50};
  for (std::size_t i = 0; i < scattered.input.fixations.size(); ++i) scattered.input.fixations[i].y_px += dy[i];
  EXPECT_EQ(def->correct(scattered.input).line, std::vector<int>(8, 0));
}
