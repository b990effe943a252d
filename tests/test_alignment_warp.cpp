// Dynamic time warping and warp (Carr et al. 2022, Behavior Research Methods
// 54(1), "Warp": the fixation sequence aligned by DTW, Euclidean cost, with
// the word centres in reading order) on cases small enough to align by hand.

#include <gtest/gtest.h>

#include <cmath>

#include "alignment/drift_registry.h"
#include "alignment/dynamic_time_warping.h"
#include "alignment_fixtures.h"

using namespace gazemill;
using namespace gazemill::alignment_fixtures;

// DTW as Sakoe & Chiba (1978) define it (common practice), local cost
// |a_i - b_j|, a = [1, 2, 3], b = [1, 3]. Local costs by hand:
//          b0=1  b1=3
//   a0=1    0     2
//   a1=2    1     1
//   a2=3    2     0
// Cumulative D(i, j) = c(i, j) + min(D(i-1, j-1), D(i-1, j), D(i, j-1)):
//   D(0,0) = 0, D(0,1) = 2, D(1,0) = 1, D(1,1) = 1 + min(0, 2, 1) = 1,
//   D(2,0) = 3, D(2,1) = 0 + min(D(1,0) = 1, D(1,1) = 1, D(2,0) = 3) = 1.
// At (2,1) the diagonal and the step from above tie at 1; our rule takes the
// diagonal, so the path is (0,0) (1,0) (2,1), cost 1.
TEST(DynamicTimeWarping, HandWorkedCostAndPathWithTheTieRule) {
  const double a[] = {1, 2, 3}, b[] = {1, 3};
  const WarpingPath p = dynamic_time_warping(3, 2, [&](std::size_t i, std::size_t j) { return std::abs(a[i] - b[j]); }, true);
  EXPECT_DOUBLE_EQ(p.cost, 1.0);
  const std::vector<std::pair<std::size_t, std::size_t>> expected{{0, 0}, {1, 0}, {2, 1}};
  EXPECT_EQ(p.steps, expected);
  EXPECT_DOUBLE_EQ(dynamic_time_warping(3, 2, [&](std::size_t i, std::size_t j) { return std::abs(a[i] - b[j]); }, false).cost, 1.0);
}

// Sequences of one element each: the path is the single pair (definition).
TEST(DynamicTimeWarping, OneByOne) {
  const WarpingPath p = dynamic_time_warping(1, 1, [](std::size_t, std::size_t) { return 7.0; }, true);
  EXPECT_DOUBLE_EQ(p.cost, 7.0);
  ASSERT_EQ(p.steps.size(), 1u);
  EXPECT_THROW(dynamic_time_warping(0, 3, [](std::size_t, std::size_t) { return 0.0; }, true), std::invalid_argument);
}

// A path must pair the first and the last elements and advance one step at
// a time (Sakoe & Chiba 1978, common practice): checked on a longer case.
TEST(DynamicTimeWarping, PathsAreMonotoneAndContinuous) {
  const double a[] = {0, 5, 1, 9, 3, 3, 8, 2}, b[] = {1, 4, 4, 7, 0};
  const WarpingPath p = dynamic_time_warping(8, 5, [&](std::size_t i, std::size_t j) { return std::abs(a[i] - b[j]); }, true);
  ASSERT_FALSE(p.steps.empty());
  EXPECT_EQ(p.steps.front(), (std::pair<std::size_t, std::size_t>{0, 0}));
  EXPECT_EQ(p.steps.back(), (std::pair<std::size_t, std::size_t>{7, 4}));
  double sum = 0;
  for (std::size_t k = 0; k < p.steps.size(); ++k) {
    sum += std::abs(a[p.steps[k].first] - b[p.steps[k].second]);
    if (k == 0) continue;
    const auto di = p.steps[k].first - p.steps[k - 1].first, dj = p.steps[k].second - p.steps[k - 1].second;
    EXPECT_TRUE(di <= 1 && dj <= 1 && di + dj >= 1);
  }
  EXPECT_DOUBLE_EQ(sum, p.cost);
}

// warp on a page worked by hand: lines at 100 and 150 px, two words per line
// at x = 100 and 500, so the expected sequence is (100,100) (500,100)
// (100,150) (500,150). Fixations, all 30 px low (past half the 50 px
// spacing, so attach puts line 0's on line 1): (100,130) (500,130), a
// refixation (500,135), then (100,180) (500,180).
// Cells pairing a fixation with a word of the other x cost at least 400 px.
// Starting at (0,0), the only path that avoids them all is (0,0) (1,1) (2,1)
// (3,2) (4,3), costing 30 + 30 + 35 + 30 + 30 = 155 px; any other path takes
// at least one 400 px cell, so this one is the cheapest. Each fixation's
// words: word 0, word 1, word 1, word 2, word 3, i.e. lines 0 0 0 1 1: all
// right, where attach gets 2 of 5.
TEST(Warp, HandAlignedPageWithAnOffsetPastHalfALine) {
  const DriftText text = page({100, 150}, {100, 500});
  DriftInput in;
  in.text = text;
  const double xy[][2] = {{100, 130}, {500, 130}, {500, 135}, {100, 180}, {500, 180}};
  for (const auto& p : xy) in.fixations.push_back({p[0], p[1], 200});
  const std::vector<int> truth{0, 0, 0, 1, 1};
  const DriftOutput out = make_drift_corrector("warp")->correct(in);
  EXPECT_EQ(out.line, truth);
  EXPECT_EQ(count_equal(make_drift_corrector("attach")->correct(in).line, truth), 2);
  // Its mean cost per path step: 155 px over 5 steps.
  EXPECT_DOUBLE_EQ(out.fit.at("dtw_mean_cost_px"), 31.0);
}

// A fixation aligned with words of two lines takes the more frequent line
// (Carr et al. 2022, "Warp"); on a tie, the earlier line (our rule). One
// fixation against a two-line text with one word per line: the path must
// pair it with both words (one of each line), a tie, so it takes line 0.
TEST(Warp, ATieBetweenLinesGoesToTheEarlierLine) {
  DriftInput in;
  in.text = page({100, 150}, {300});
  in.fixations.push_back({300, 149, 200});
  EXPECT_EQ(make_drift_corrector("warp")->correct(in).line, std::vector<int>{0});
}

// The mean DTW cost is per step of the warping path, not per fixation: the
// fixation of the previous test, (300, 149), is paired with both words, at
// (300, 100) (49 px) and (300, 150) (1 px): cost 50 over 2 steps = 25 px,
// where one fixation would make it 50.
TEST(Warp, MeanCostIsPerPathStep) {
  DriftInput in;
  in.text = page({100, 150}, {300});
  in.fixations.push_back({300, 149, 200});
  EXPECT_DOUBLE_EQ(make_drift_corrector("warp")->correct(in).fit.at("dtw_mean_cost_px"), 25.0);
}
