// Drift-correction methods on hand-built pages where the right line of every
// fixation is known by construction. Methods as Carr et al. (2022), Behavior
// Research Methods 54(1), 287-310, describe them (section "Algorithms";
// methods.md section 9 records which parts were read and which are from
// memory). Every expected value is derived by hand in the comment above its
// check, from the method's definition; none is taken from the code.

#include <gtest/gtest.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <functional>
#include <limits>

#include "alignment/chain_corrector.h"
#include "alignment/drift_registry.h"
#include "alignment/grid_search.h"
#include "alignment_fixtures.h"

using namespace gazemill;
using namespace gazemill::alignment_fixtures;

namespace {

std::vector<int> lines_of(const std::string& method, const DriftInput& in, const std::map<std::string, double>& params = {}) {
  return make_drift_corrector(method, params)->correct(in).line;
}

// methods.md section 9's fixture (own design, not from the paper): three
// lines at y = 100, 150, 200 px, five words at x = 100, 300, 500, 700, 900,
// read in order, with slope drift y_obs = y_line + 0.1 (x - 100): the drift
// at the five words is 0, 20, 40, 60, 80 px.
Scanpath slope_fixture() {
  const DriftText text = page({100, 150, 200}, {100, 300, 500, 700, 900});
  return read(text, in_order(text), [](double x, double) { return 0.1 * (x - 100); });
}

}  // namespace

// attach is nearest-line assignment (Carr et al. 2022, "Attach"): a fixation
// moves to the next line once its drift passes half the 50 px spacing, i.e.
// drift 40, 60, 80 px; on the bottom line nothing lies below. Hand-derived
// (methods.md section 9 lists the same, computed): line 0 -> [0 0 1 1 2],
// line 1 -> [1 1 2 2 2], line 2 -> [2 2 2 2 2]; 9 of 15 right.
TEST(DriftMethods, AttachOnTheSlopeFixtureGetsNineOfFifteen) {
  const Scanpath s = slope_fixture();
  const std::vector<int> expected{0, 0, 1, 1, 2, 1, 1, 2, 2, 2, 2, 2, 2, 2, 2};
  EXPECT_EQ(lines_of("attach", s.input), expected);
  EXPECT_EQ(count_equal(lines_of("attach", s.input), s.true_line), 9);
}

// Methods that use the reading order or fit the tilt get all 15 (methods.md
// section 9: "segment, or any order-based method, gives 100 % on this in-order
// case"). By hand:
// - segment: the two leftward saccades (-800 px, the return sweeps) are the
//   m - 1 = 2 longest, so the segments are the lines.
// - warp: fixations share their x with their own word; every cell off the
//   diagonal of the warping matrix pairs a fixation with a word at least
//   200 px away in x, while every diagonal cell costs at most 80 px, and a
//   path leaving the diagonal visits at least one such cell per diagonal cell
//   it skips; so the diagonal (each fixation with its own word) is cheapest.
// - merge: the progressive runs, cut at the two return sweeps, are the three
//   lines; three runs for three lines need no merging; by mean y (140, 190,
//   240 px) they take lines 0, 1, 2.
// - regress: slope 0.1 (inside its +-0.1 bound) and offset 0 put every
//   fixation exactly on its tilted line, a sum of squares of 0, the least possible.
TEST(DriftMethods, OrderAndTiltMethodsGetTheSlopeFixtureRight) {
  const Scanpath s = slope_fixture();
  for (const std::string method : {"segment", "warp", "merge", "regress"}) {
    EXPECT_EQ(lines_of(method, s.input), s.true_line) << method;
  }
}

// chain, split and compare give a run of fixations one line by its mean y
// (Carr et al. 2022, "Chain", "Split", "Compare"). Each line's run here has
// mean drift 0.1 x mean(x - 100) = 40 px, past half a line, so lines 0 and 1
// move down whole, and only line 2's five fixations stay right: 5 of 15.
// compare's candidate lines all have the same word pattern (DTW cost 0 to
// each), so it keeps the nearest, which is the same answer. By hand; the
// chain thresholds are 20 x 20 = 400 px and 2 x 20 = 40 px: in-line saccades
// (200, 20) continue a chain, return sweeps (-800, -30) end one; split's
// two-means puts the two sweeps in the leftward group.
TEST(DriftMethods, RunMethodsMoveWholeLinesWhenTheirMeanDriftPassesHalfALine) {
  const Scanpath s = slope_fixture();
  const std::vector<int> expected{1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2};
  for (const std::string method : {"chain", "split", "compare"}) EXPECT_EQ(lines_of(method, s.input), expected) << method;
}

// Shift (drift growing down the page; Carr et al. 2022's "shift"): eight
// lines at y = 100..450 px (50 px apart), words at x = 100, 500, 900, and
// y_obs = y + 0.11 (y - 100): line k drifts 5.5 k px. attach is wrong where
// the drift passes 25 px and a line lies below: lines 5 (27.5) and 6 (33);
// line 7 (38.5) has no line below. 18 of 24, by hand.
// stretch: k = 1/1.11 = 0.901 (inside 0.9..1.1) and offset 0 map every
// fixation back onto its line (summed distance 0), so it gets all 24.
// warp and segment: all 24 by the arguments of the slope fixture (in-line
// steps are 400 px here, return sweeps -800 px, drift at most 38.5 px).
TEST(DriftMethods, ShiftDefeatsAttachButNotStretchWarpOrSegment) {
  const DriftText text = page({100, 150, 200, 250, 300, 350, 400, 450}, {100, 500, 900});
  const Scanpath s = read(text, in_order(text), [](double, double y) { return 0.11 * (y - 100); });
  EXPECT_EQ(count_equal(lines_of("attach", s.input), s.true_line), 18);
  for (const std::string method : {"stretch", "warp", "segment"}) EXPECT_EQ(lines_of(method, s.input), s.true_line) << method;
}

// Offset beyond half a line (30 px at 50 px spacing): lines 100, 150, 200,
// words at 100..900, every fixation 30 px low. attach: 130 -> line 1, 180 ->
// line 2, 230 -> line 2: 5 of 15, by hand. cluster (Carr et al. 2022,
// "Cluster"): the y values take three distinct values, so three-means splits
// them exactly and, ordered, they take lines 0, 1, 2: 15 of 15. regress: its
// offset bound (25 px) leaves 5 px to each line, a sum of squares of 375,
// against 12 500 for the rival fit one line down (offset -20: the bottom
// line's five fixations 50 px off): all 15 right.
TEST(DriftMethods, ClusterAndRegressUndoAnOffsetPastHalfALine) {
  const DriftText text = page({100, 150, 200}, {100, 300, 500, 700, 900});
  const Scanpath s = read(text, in_order(text), [](double, double) { return 30.0; });
  EXPECT_EQ(count_equal(lines_of("attach", s.input), s.true_line), 5);
  EXPECT_EQ(lines_of("cluster", s.input), s.true_line);
  EXPECT_EQ(lines_of("regress", s.input), s.true_line);
}

// chain's thresholds (Carr et al. 2022, "Chain": "too low and chain becomes
// attach; too high and it forces many fixations onto one line"). Two lines at
// 100 and 150 px, words at 100, 300, 500, 700; line 0 read at y = 120, 130,
// 120, 120 and line 1 at 160, 170, 160, 160 (vertical scatter, our numbers).
// By hand:
// - attach: 130 is nearer 150, so one fixation goes wrong: 7 of 8.
// - chain, defaults (400 px, 40 px for a 20 px font): in-line steps of 200 px
//   and at most 10 px continue a chain, the -600 px return sweep ends it; the
//   chains' mean y are 122.5 (line 0) and 162.5 (line 1): 8 of 8.
// - chain at 0.5 font heights (10 px): every step ends a chain, so each
//   fixation is its own chain: exactly attach's answer.
// - chain at 1000 font heights: one chain of mean y 142.5, all on line 1: 4 of 8.
TEST(DriftMethods, ChainThresholdsTooLowGiveAttachTooHighForceOneLine) {
  const DriftText text = page({100, 150}, {100, 300, 500, 700});
  Scanpath s = read(text, in_order(text));
  const double scatter[] = {20, 30, 20, 20, 10, 20, 10, 10};
  for (std::size_t i = 0; i < s.input.fixations.size(); ++i) s.input.fixations[i].y_px += scatter[i];
  const auto attach = lines_of("attach", s.input);
  EXPECT_EQ(count_equal(attach, s.true_line), 7);
  EXPECT_EQ(lines_of("chain", s.input), s.true_line);
  EXPECT_EQ(lines_of("chain", s.input, {{"x_threshold_font_heights", 0.5}, {"y_threshold_font_heights", 0.5}}), attach);
  EXPECT_EQ(lines_of("chain", s.input, {{"x_threshold_font_heights", 1000}, {"y_threshold_font_heights", 1000}}),
            std::vector<int>(8, 1));
}

// chain's boundary, decided (alignment/chain_corrector.h, our choice): a
// step of exactly the x threshold stays in the chain. Font height 20 px, so
// the default x threshold is 20 x 20 = 400 px. Lines at 100 and 150: A at
// (100, 128) is nearest line 1 (22 px against 28), B at (500, 100) on line
// 0. One chain: mean y 114, line 0 for both. B 401 px on: two chains, A on
// line 1.
TEST(DriftMethods, ChainKeepsAStepOfExactlyTheThreshold) {
  DriftInput in;
  in.text = page({100, 150}, {100, 300, 500});
  in.fixations = {{100, 128, 200}, {500, 100, 200}};
  EXPECT_EQ(lines_of("chain", in), (std::vector<int>{0, 0}));
  in.fixations[1].x_px = 501;
  EXPECT_EQ(lines_of("chain", in), (std::vector<int>{1, 0}));
}

// compare (Carr et al. 2022, "Compare", after Lima Sanches et al. 2015):
// lines at 100 and 150 px, line 0 with words at 100..900 (five), line 1 with
// words at 100 and 250 (a short last line); every fixation on a word, 30 px
// low. The -800 px sweep is longer than half the widest line (400 px), so
// there are two gaze lines. The first (x 100..900) warps onto line 0's words
// at cost 0 and onto line 1's at cost > 0 (900 px is 650 px from 250): line 0.
// The second (x 100, 250) costs 0 against line 1: line 1. So 7 of 7, where
// attach, by nearest line, gets only line 1's two.
TEST(DriftMethods, CompareTellsLinesApartByTheirWordPattern) {
  DriftText text = page({100, 150}, {});
  text.word_x_px = {{100, 300, 500, 700, 900}, {100, 250}};
  const Scanpath s = read(text, in_order(text), [](double, double) { return 30.0; });
  EXPECT_EQ(count_equal(lines_of("attach", s.input), s.true_line), 2);
  EXPECT_EQ(lines_of("compare", s.input), s.true_line);
}

// merge (Carr et al. 2022, "Merge", after Spakov et al. 2019): lines at 100
// and 150 px, words at 100..900; line 0 read with a regression (words 0 1 2,
// back to 1, then 3 4), line 1 in order; all 30 px low. Runs, cut at
// leftward saccades: [100 300 500] [300 700 900] on line 0 and line 1's five.
// Three runs for two lines: the first phase (runs of 3 or more) may merge the
// two line-0 runs (one flat line, error 0); a line-0 run with the line-1 run
// fails both the mean-y limit (50 px apart, limit 25) and the error limit
// (rms about 22.5 and 23.5 px against 20, worked by hand from the sums of
// squares). Two runs remain; by mean y (130, 180) they take lines 0 and 1:
// 11 of 11, where attach gets only line 1's five.
TEST(DriftMethods, MergeJoinsTheRunsOfOneLine) {
  const DriftText text = page({100, 150}, {100, 300, 500, 700, 900});
  const Scanpath s =
      read(text, {{0, 0}, {0, 1}, {0, 2}, {0, 1}, {0, 3}, {0, 4}, {1, 0}, {1, 1}, {1, 2}, {1, 3}, {1, 4}}, [](double, double) { return 30.0; });
  EXPECT_EQ(count_equal(lines_of("attach", s.input), s.true_line), 5);
  EXPECT_EQ(lines_of("merge", s.input), s.true_line);
}

// merge's gradient limit is on the steepness either way: a merged run's
// line must be "flatter than" max_gradient (0.1, alignment/merge_corrector.h),
// so a line falling 0.2 px per px is as out of bounds as one rising 0.2.
// Lines at 100 and 150 px (line height 50: error limit 20 px, mean-y limit
// 25 px). Runs, cut at the leftward saccades: B (100, 160) (200, 141)
// (400, 100), C (100, 80) (200, 100) (400, 140), A (300, 120) alone. Joint
// least-squares fits (numpy.polyfit): B+C gradient -0.0004, rms 28.4 px,
// mean y 133.7 and 106.7 (26.7 apart); B+A gradient -0.201, rms 0.418 px;
// C+A gradient +0.2, rms 0 (collinear). Three runs for two lines: one merge.
// Limited phases: B+C fails the error and mean-y limits, B+A and C+A the
// gradient limit; so the unlimited phase takes the best fit, C+A (mean y
// 110, line 0), and B (133.7) goes to line 1. Were only rising lines
// limited, B+A would merge in the second phase and A would go to line 1.
TEST(DriftMethods, MergeLimitsFallingLinesAsRisingOnes) {
  DriftInput in;
  in.text = page({100, 150}, {100, 200, 300, 400});
  in.fixations = {{100, 160, 200}, {200, 141, 200}, {400, 100, 200}, {100, 80, 200}, {200, 100, 200}, {400, 140, 200}, {300, 120, 200}};
  EXPECT_EQ(lines_of("merge", in), (std::vector<int>{1, 1, 1, 0, 0, 0, 0}));
}

// The documented weakness of the methods that assume one pass through the
// lines in order (Carr et al. 2022: segment assumes each line is read once in
// order; warp "assumes the text is read in order"; methods.md section 9).
// Lines at 100, 150, 200, words at 100..900, no drift; reading: line 0,
// line 1, a between-line regression to line 0's first two words, line 2.
// By hand:
// - segment: the leftward saccades are -800 (line 0 -> 1), -800 (line 1 ->
//   back to line 0) and -200 (-> line 2); the two longest cut before fixation
//   5 and before fixation 10, so the regression's two fixations join line 2.
// - warp: after line 1's last word (word 9) the next words in reading order
//   are line 2's; DTW is monotone, so fixations 10 and 11 can only pair with
//   word 9 (800 and 600 px away) or later words; line 2's first word is 100
//   and 224 px away, so they join line 2.
// - the methods that ignore order (attach, chain, cluster, regress, stretch)
//   see undistorted fixations and get all 17.
TEST(DriftMethods, BetweenLineRegressionsBreakSegmentAndWarp) {
  const DriftText text = page({100, 150, 200}, {100, 300, 500, 700, 900});
  std::vector<Visit> visits;
  for (int w = 0; w < 5; ++w) visits.push_back({0, w});
  for (int w = 0; w < 5; ++w) visits.push_back({1, w});
  visits.push_back({0, 0});
  visits.push_back({0, 1});
  for (int w = 0; w < 5; ++w) visits.push_back({2, w});
  const Scanpath s = read(text, visits);
  for (const std::string method : {"segment", "warp"}) {
    const auto lines = lines_of(method, s.input);
    EXPECT_EQ(lines[10], 2) << method;
    EXPECT_EQ(lines[11], 2) << method;
    EXPECT_EQ(count_equal(lines, s.true_line), 15) << method;
  }
  for (const std::string method : {"attach", "chain", "cluster", "regress", "stretch"}) {
    EXPECT_EQ(lines_of(method, s.input), s.true_line) << method;
  }
}

// A line read twice (Carr et al. 2022, "Split": split, unlike segment, does
// not assume exactly m - 1 return sweeps). Lines at 100 and 150, words at
// 100..900; line 0 read, read again from its start (-800 px), then a sweep
// that undershoots onto line 1's second word (-600 px) and line 1's words 1-4.
// segment takes the single longest leftward saccade (-800) as the sweep, so
// the second reading of line 0 (5 fixations) goes to line 1: 9 of 14.
// split: two-means on the saccade vectors, started from (-800, 0) and
// (200, 0), puts (-600, 50) with the former (206 px against 801 px away), so
// it cuts at both; the pieces' mean y are 100, 100, 150: 14 of 14. By hand.
TEST(DriftMethods, SplitSurvivesARereadLineThatShiftsSegment) {
  const DriftText text = page({100, 150}, {100, 300, 500, 700, 900});
  std::vector<Visit> visits;
  for (int pass = 0; pass < 2; ++pass) {
    for (int w = 0; w < 5; ++w) visits.push_back({0, w});
  }
  for (int w = 1; w < 5; ++w) visits.push_back({1, w});
  const Scanpath s = read(text, visits);
  EXPECT_EQ(count_equal(lines_of("segment", s.input), s.true_line), 9);
  EXPECT_EQ(lines_of("split", s.input), s.true_line);
}

// Undistorted data stay as they are (common practice, no source: with no
// drift every fixation is on its line, and a correction that moved one would
// be wrong). Three lines of different word patterns (so compare can tell
// them apart), read in order with one within-line regression on line 1.
// Hand checks of the less obvious methods: segment's two longest leftward
// saccades are the sweeps (-800, -450; the regression is -150); compare's
// gaze lines, cut at leftward jumps over 400 px, are the lines, and each
// warps onto its own line more cheaply (0, 150, 0 px) than onto the others;
// merge's extra run (the two fixations after the regression) joins line 1's
// other run in its second phase (same mean y, error 0).
TEST(DriftMethods, EveryMethodLeavesUndistortedReadingAlone) {
  DriftText text = page({100, 150, 200}, {});
  text.word_x_px = {{100, 300, 500, 700, 900}, {100, 250, 400, 550}, {100, 350, 600}};
  const Scanpath s = read(text, {{0, 0}, {0, 1}, {0, 2}, {0, 3}, {0, 4}, {1, 0}, {1, 1}, {1, 2}, {1, 1}, {1, 3}, {2, 0}, {2, 1}, {2, 2}});
  for (const auto& method : drift_method_names()) {
    const DriftOutput out = make_drift_corrector(method)->correct(s.input);
    EXPECT_EQ(out.line, s.true_line) << method;
    EXPECT_DOUBLE_EQ(out.fit.at("moved_off_nearest_share"), 0.0) << method;
  }
}

// On a text of one line every method must put every fixation on it (our
// requirement for single-line sentences: nothing attach gets right may
// change). Fixations scattered 70 px above and below, with leftward jumps,
// so that each method's machinery runs (chains break, segments and gaze
// lines are cut, runs merge).
TEST(DriftMethods, OnOneLineEveryMethodKeepsEveryFixationOnIt) {
  const DriftText text = page({100}, {100, 300, 500, 700, 900});
  DriftInput in;
  in.text = text;
  const double xy[][2] = {{100, 60}, {300, 140}, {500, 100}, {200, 30}, {700, 170}, {900, 95}, {100, 120}, {500, 80}};
  for (const auto& p : xy) in.fixations.push_back({p[0], p[1], 200});
  for (const auto& method : drift_method_names()) {
    const DriftOutput out = make_drift_corrector(method)->correct(in);
    EXPECT_EQ(out.line, std::vector<int>(8, 0)) << method;
    EXPECT_EQ(out.corrected_y_px, std::vector<double>(8, 100.0)) << method;
  }
}

// attach is the nearest line (Carr et al. 2022, "Attach"); the expected
// lines come from a plain loop over the lines here (common practice, no
// source), on unevenly spaced lines and no ties.
TEST(DriftMethods, AttachIsTheNearestLine) {
  DriftInput in;
  in.text = page({100, 160, 200, 290}, {100});
  const double ys[] = {-50, 99, 131, 129, 179, 181, 244, 246, 400, 160};
  for (double y : ys) in.fixations.push_back({100, y, 200});
  std::vector<int> expected;
  for (double y : ys) {
    int best = 0;
    for (int l = 1; l < 4; ++l) {
      if (std::abs(y - in.text.line_y_px[l]) < std::abs(y - in.text.line_y_px[best])) best = l;
    }
    expected.push_back(best);
  }
  EXPECT_EQ(lines_of("attach", in), expected);
}

// Halfway between two lines, decided (alignment/drift_input.h, our choice):
// the upper line. Centres 100, 160, 200: y = 130 and y = 180 are each
// exactly halfway; they go to lines 0 and 1. Just below halfway they go down.
TEST(DriftMethods, HalfwayBetweenTwoLinesIsTheUpperOne) {
  const std::vector<double> centres{100, 160, 200};
  EXPECT_EQ(nearest_line(centres, 130), 0);
  EXPECT_EQ(nearest_line(centres, 180), 1);
  EXPECT_EQ(nearest_line(centres, 130.001), 1);
  EXPECT_EQ(nearest_line(centres, 180.001), 2);
}

// The output's corrected y is the assigned line's centre, and the shared fit
// values are always there (our output contract). warp, right on the slope
// fixture (above), moves the 6 fixations attach got wrong off their nearest
// line (6/15), and the drift its lines imply is the fixture's own: slope
// 0.1, 0 px at x = 100 on the first line, no shift.
TEST(DriftMethods, OutputCarriesLineCentresAndTheFitSummary) {
  const Scanpath s = slope_fixture();
  for (const auto& method : drift_method_names()) {
    const DriftOutput out = make_drift_corrector(method)->correct(s.input);
    for (std::size_t i = 0; i < out.line.size(); ++i) EXPECT_EQ(out.corrected_y_px[i], s.input.text.line_y_px[out.line[i]]) << method;
    for (const char* key : {"offset_px", "slope", "shift", "residual_rms_px", "unexplained_rms_px", "moved_off_nearest_share", "confidence"}) {
      EXPECT_TRUE(out.fit.count(key)) << method << " " << key;
    }
    EXPECT_GE(out.fit.at("confidence"), 0.0) << method;
    EXPECT_LE(out.fit.at("confidence"), 1.0) << method;
  }
  EXPECT_DOUBLE_EQ(make_drift_corrector("attach")->correct(s.input).fit.at("moved_off_nearest_share"), 0.0);
  const DriftOutput warped = make_drift_corrector("warp")->correct(s.input);
  EXPECT_DOUBLE_EQ(warped.fit.at("moved_off_nearest_share"), 6.0 / 15.0);
  EXPECT_NEAR(warped.fit.at("slope"), 0.1, 1e-12);
  EXPECT_NEAR(warped.fit.at("offset_px"), 0.0, 1e-9);
  EXPECT_NEAR(warped.fit.at("shift"), 0.0, 1e-12);
}

TEST(DriftMethods, ATrialWithoutFixationsGivesAnEmptyAssignment) {
  DriftInput in;
  in.text = page({100, 150}, {100, 300});
  for (const auto& method : drift_method_names()) {
    const DriftOutput out = make_drift_corrector(method)->correct(in);
    EXPECT_TRUE(out.line.empty()) << method;
    EXPECT_DOUBLE_EQ(out.fit.at("confidence"), 1.0) << method;
  }
}

TEST(DriftInputErrors, BadTextsAreNamed) {
  DriftInput in;
  in.text = page({100, 150}, {100});
  in.fixations.push_back({100, 100, 200});
  auto message = [&](DriftInput bad) {
    try {
      make_drift_corrector("attach")->correct(bad);
    } catch (const std::invalid_argument& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  DriftInput no_lines = in;
  no_lines.text.line_y_px.clear();
  no_lines.text.word_x_px.clear();
  EXPECT_NE(message(no_lines).find("at least one text line"), std::string::npos);
  DriftInput unordered = in;
  unordered.text.line_y_px = {150, 100};
  EXPECT_NE(message(unordered).find("increase"), std::string::npos);
  DriftInput no_height = in;
  no_height.text.line_height_px = 0;
  EXPECT_NE(message(no_height).find("line_height_px"), std::string::npos);
  DriftInput words = in;
  words.text.word_x_px.pop_back();
  EXPECT_NE(message(words).find("word_x_px"), std::string::npos);
  DriftInput nan_fixation = in;
  nan_fixation.fixations[0].y_px = std::numeric_limits<double>::quiet_NaN();
  EXPECT_NE(message(nan_fixation).find("fixation 0"), std::string::npos);
  DriftInput no_words = in;
  no_words.text.word_x_px = {{}, {}};
  EXPECT_THROW(make_drift_corrector("warp")->correct(no_words), std::invalid_argument);
  EXPECT_THROW(make_drift_corrector("compare")->correct(no_words), std::invalid_argument);
  EXPECT_NO_THROW(make_drift_corrector("attach")->correct(no_words));
}

// NearestLine (the fitting methods' repeated look-up) gives nearest_line's
// answer for every y: evenly and unevenly spaced lines, one line, exact
// halfway points and centres, values far outside the text, infinities and
// NaN (nearest_line: line 0, as std::lower_bound finds no centre below NaN).
TEST(DriftMethods, RepeatedNearestLineLookUpAgreesWithNearestLine) {
  const std::vector<std::vector<double>> pages{
      {100},           {100, 160, 200}, {100, 150, 200, 250, 300}, {0.1, 0.2, 0.3, 0.4, 0.7, 5.0, 5.05},
      {-50, -10, 400}, {1e-300, 1e300},
  };
  const double inf = std::numeric_limits<double>::infinity();
  for (const auto& ly : pages) {
    std::vector<double> ys{-inf, inf, std::numeric_limits<double>::quiet_NaN(), -1e308, 1e308, 0.0, -0.0};
    for (std::size_t i = 0; i < ly.size(); ++i) {
      ys.push_back(ly[i]);
      ys.push_back(std::nextafter(ly[i], -inf));
      ys.push_back(std::nextafter(ly[i], inf));
      if (i > 0) {
        const double half = ly[i - 1] + (ly[i] - ly[i - 1]) / 2;
        ys.push_back(half);
        ys.push_back(std::nextafter(half, -inf));
        ys.push_back(std::nextafter(half, inf));
      }
    }
    if (ly.back() - ly.front() < 1000) {
      for (double y = ly.front() - 500; y <= ly.back() + 500; y += 0.37) ys.push_back(y);
    }
    const NearestLine nearest(ly);
    for (double y : ys) EXPECT_EQ(nearest(y), nearest_line(ly, y)) << "y = " << y << " with " << ly.size() << " lines";
  }
}

// minimise_on_grid keeps only its best starts instead of sorting the whole
// grid, and may evaluate a grid row at once: neither may change an answer.
// The reference is the search as first written (stable sort of every grid
// point); objectives with plateaus (many equal values, so the tie rule
// decides), a NaN in the grid, and a row() that must match the calls.
namespace {

SearchResult reference_minimise(const std::function<double(double, double)>& f, SearchRange a, SearchRange b, int starts) {
  const int na = std::max(1, a.steps), nb = std::max(1, b.steps);
  const double da = (a.high - a.low) / na, db = (b.high - b.low) / nb;
  std::vector<SearchResult> grid;
  for (int i = 0; i <= na; ++i) {
    for (int j = 0; j <= nb; ++j) {
      const double pa = a.low + da * i, pb = b.low + db * j;
      grid.push_back({pa, pb, f(pa, pb)});
    }
  }
  std::stable_sort(grid.begin(), grid.end(), [](const SearchResult& x, const SearchResult& y) { return x.value < y.value; });
  SearchResult best = grid.front();
  const int n_starts = std::min<int>(std::max(1, starts), static_cast<int>(grid.size()));
  for (int s = 0; s < n_starts; ++s) {
    SearchResult cur = grid[static_cast<std::size_t>(s)];
    double sa = da / 2, sb = db / 2;
    while (sa > da / 64 || sb > db / 64) {
      bool moved = false;
      const std::array<std::array<double, 2>, 4> moves{{{sa, 0}, {-sa, 0}, {0, sb}, {0, -sb}}};
      for (const auto& mv : moves) {
        const double pa = std::clamp(cur.a + mv[0], std::min(a.low, a.high), std::max(a.low, a.high));
        const double pb = std::clamp(cur.b + mv[1], std::min(b.low, b.high), std::max(b.low, b.high));
        const double v = f(pa, pb);
        if (v < cur.value) {
          cur = {pa, pb, v};
          moved = true;
          break;
        }
      }
      if (!moved) {
        sa /= 2;
        sb /= 2;
      }
    }
    if (cur.value < best.value) best = cur;
  }
  return best;
}

struct WithRow {
  std::function<double(double, double)> f;
  double operator()(double a, double b) const { return f(a, b); }
  void row(double a, const double* b, std::size_t count, double* out) const {
    for (std::size_t k = 0; k < count; ++k) out[k] = f(a, b[k]);
  }
};

bool same_bits(const SearchResult& x, const SearchResult& y) {
  return std::memcmp(&x.a, &y.a, sizeof x.a) == 0 && std::memcmp(&x.b, &y.b, sizeof x.b) == 0 &&
         std::memcmp(&x.value, &y.value, sizeof x.value) == 0;
}

}  // namespace

TEST(DriftMethods, GridSearchAnswersAsAFullStableSortWould) {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const std::vector<std::function<double(double, double)>> objectives{
      [](double a, double b) { return std::floor(std::abs(a) * 3) + std::floor(std::abs(b) / 7); },  // plateaus
      [](double, double) { return 1.0; },                                                             // all equal
      [](double a, double b) { return std::abs(std::sin(a * 40) + std::cos(b / 3)); },
      [](double a, double b) { return std::round((a * a + b * b) * 0.01); },
      [nan](double a, double b) { return a > 0.04 && b < 0 ? nan : std::floor(std::abs(b)); },  // NaN in the grid
  };
  const std::vector<std::pair<SearchRange, SearchRange>> ranges{
      {{-0.1, 0.1, 20}, {-25, 25, 20}}, {{0.9, 1.1, 20}, {-10, 10, 20}}, {{-1, 1, 3}, {-1, 1, 1}}, {{0.2, -0.2, 5}, {3, -3, 4}}};
  for (const auto& f : objectives) {
    for (const auto& [ra, rb] : ranges) {
      for (int starts : {1, 3, 7}) {
        const SearchResult want = reference_minimise(f, ra, rb, starts);
        EXPECT_TRUE(same_bits(minimise_on_grid(f, ra, rb, starts), want));
        EXPECT_TRUE(same_bits(minimise_on_grid([&](double a, double b) { return f(a, b); }, ra, rb, starts), want));
        EXPECT_TRUE(same_bits(minimise_on_grid(WithRow{f}, ra, rb, starts), want));
      }
    }
  }
}
