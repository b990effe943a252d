// Reading-time measures on hand-worked scanpaths of our own, each value
// derived by hand from the definitions of Rayner (1998, Psychological
// Bulletin 124(3)) and Liversedge, Paterson & Pickering (1998) as written in
// measures/reading_measures.h, and invariants over random scanpaths.

#include <gtest/gtest.h>

#include <random>

#include "measures/reading_measures.h"
#include "measures/region_mapper.h"
#include "pipeline/measure_table.h"

using namespace gazemill;

namespace {

std::vector<PlacedFixation> path(std::initializer_list<std::pair<int, double>> seq) {
  std::vector<PlacedFixation> out;
  double x = 100;
  for (const auto& [region, ms] : seq) {
    PlacedFixation f;
    f.region = region;
    f.duration_ms = ms;
    f.line = region < 0 ? -1 : 0;
    f.x_px = x;
    x += 30;
    out.push_back(f);
  }
  return out;
}

}  // namespace

// Six regions, fixations (region, ms): (0,200) (1,220) (3,250) (3,180) (2,210)
// (4,230) (1,190) (5,240) (3,150). Values worked by hand (methods.md section 8
// lists the same case, computed there with its Appendix B code):
//   region 0: FFD 200, SFD 200, GD 200, go-past 200, TFT 200, regression out 0
//   region 1: 220 / 220 / 220 / 220, TFT 410 (220 + 190), rereading 190, second pass 190, out 0
//   region 2: skipped in first pass (region 3 was fixated before it): first-pass NA, TFT 210
//   region 3: FFD 250, SFD NA (two first-pass fixations), GD 430, go-past 640 (250+180+210),
//             selective go-past 430, TFT 580, rereading 150, second pass 150, out 1 (next is region 2)
//   region 4: 230 / 230 / 230, go-past 420 (230 + 190 on region 1), selective 230, out 1
//   region 5: 240, go-past 390 (240 + 150 to the end of the trial), out 1 (then region 3)
TEST(ReadingMeasures, WorkedScanpathWithRegressionsAndASkip) {
  const auto m = reading_measures(path({{0, 200}, {1, 220}, {3, 250}, {3, 180}, {2, 210}, {4, 230}, {1, 190}, {5, 240}, {3, 150}}), 6, 12);
  EXPECT_EQ(m[0].first_fixation_ms, 200);
  EXPECT_EQ(m[0].single_fixation_ms, 200);
  EXPECT_EQ(m[0].go_past_ms, 200);
  EXPECT_EQ(m[0].regression_out, false);
  EXPECT_EQ(m[1].total_time_ms, 410);
  EXPECT_EQ(m[1].rereading_ms, 190);
  EXPECT_EQ(m[1].second_pass_ms, 190);
  EXPECT_EQ(m[1].regression_in, true);  // re-entered from region 4
  EXPECT_EQ(m[0].regression_in, false);  // only ever entered at the trial's start
  EXPECT_EQ(m[4].regression_in, false);  // entered from region 2
  EXPECT_TRUE(m[2].skipped);
  EXPECT_TRUE(m[2].fixated);
  EXPECT_FALSE(m[2].first_fixation_ms);
  EXPECT_FALSE(m[2].gaze_duration_ms);
  EXPECT_FALSE(m[2].go_past_ms);
  EXPECT_FALSE(m[2].regression_out);
  EXPECT_EQ(m[2].first_pass_fixations, 0);  // a count: nothing happened in first pass
  EXPECT_EQ(m[2].total_time_ms, 210);
  EXPECT_EQ(m[2].rereading_ms, 210);        // all of its time came after the first pass
  EXPECT_EQ(m[2].second_pass_ms, 210);      // its one run is its first visit after the first pass
  EXPECT_EQ(m[2].regression_in, true);  // entered from region 3
  EXPECT_EQ(m[3].first_fixation_ms, 250);
  EXPECT_FALSE(m[3].single_fixation_ms);
  EXPECT_EQ(m[3].gaze_duration_ms, 430);
  EXPECT_EQ(m[3].first_pass_fixations, 2);
  EXPECT_EQ(m[3].go_past_ms, 640);
  EXPECT_EQ(m[3].selective_go_past_ms, 430);
  EXPECT_EQ(m[3].total_time_ms, 580);
  EXPECT_EQ(m[3].total_fixations, 3);
  EXPECT_EQ(m[3].second_pass_ms, 150);
  EXPECT_EQ(m[3].regression_out, true);
  EXPECT_EQ(m[4].go_past_ms, 420);
  EXPECT_EQ(m[4].selective_go_past_ms, 230);
  EXPECT_EQ(m[4].regression_out, true);
  EXPECT_EQ(m[5].go_past_ms, 390);
  EXPECT_EQ(m[5].regression_out, true);
  EXPECT_FALSE(m[0].skipped);
}

// Our conventions for fixations off the regions (-1) and never-fixated regions, by hand:
// (0,200) (-1,100) (0,150) (2,300) (-1,80) (1,120) (2,90), four regions.
//   region 0: the off-region fixation ends the first-pass run: GD 200 (not 350); its next fixation
//             on a region is region 0 again, so regression out is 0; second pass 150; go-past
//             200 + 100 + 150 = 450 (off-region time counts until region 2 is fixated).
//   region 1: skipped (region 2 came first); TFT 120.
//   region 2: GD 300; next fixation on a region is region 1: regression out 1; go-past 300 + 80 + 120 + 90
//             = 590 to the end of the trial; selective go-past 300 + 90 = 390.
//   region 3: never fixated: skipped, not fixated, every duration NA (never 0).
TEST(ReadingMeasures, OffRegionFixationsAndNeverFixatedRegions) {
  const auto m = reading_measures(path({{0, 200}, {-1, 100}, {0, 150}, {2, 300}, {-1, 80}, {1, 120}, {2, 90}}), 4, 12);
  EXPECT_EQ(m[0].gaze_duration_ms, 200);
  EXPECT_EQ(m[0].regression_out, false);
  EXPECT_EQ(m[0].second_pass_ms, 150);
  EXPECT_EQ(m[0].go_past_ms, 450);
  EXPECT_TRUE(m[1].skipped);
  EXPECT_EQ(m[1].total_time_ms, 120);
  EXPECT_EQ(m[2].gaze_duration_ms, 300);
  EXPECT_EQ(m[2].regression_out, true);
  EXPECT_EQ(m[2].go_past_ms, 590);
  EXPECT_EQ(m[2].selective_go_past_ms, 390);
  EXPECT_TRUE(m[3].skipped);
  EXPECT_FALSE(m[3].fixated);
  EXPECT_FALSE(m[3].total_time_ms);
  EXPECT_FALSE(m[3].first_fixation_ms);
  EXPECT_EQ(m[3].total_fixations, 0);
  EXPECT_EQ(m[3].first_pass_fixations, 0);
  EXPECT_FALSE(m[3].regression_in);   // never entered: undefined, not "no"
  EXPECT_FALSE(m[3].second_pass_ms);
  EXPECT_FALSE(m[3].rereading_ms);
}

// Gaze duration against selective go-past, by hand (Liversedge, Paterson &
// Pickering 1998: gaze duration ends when the eyes first leave the region;
// the selective regression-path time sums the region's own fixations until a
// region further on is fixated): (0,200) (1,150) (0,100) (1,180) (2,200).
//   region 1: first-pass run = the 150 ms fixation only (the eyes go back to region 0), so
//             gaze duration 150, not 330; selective go-past 150 + 180 = 330; go-past
//             150 + 100 + 180 = 430; regression out 1; second pass 180; rereading 180.
TEST(ReadingMeasures, GazeDurationEndsAtTheFirstExitButSelectiveGoPastDoesNot) {
  const auto m = reading_measures(path({{0, 200}, {1, 150}, {0, 100}, {1, 180}, {2, 200}}), 3, 12);
  EXPECT_EQ(m[1].gaze_duration_ms, 150);
  EXPECT_EQ(m[1].first_pass_fixations, 1);
  EXPECT_EQ(m[1].single_fixation_ms, 150);
  EXPECT_EQ(m[1].selective_go_past_ms, 330);
  EXPECT_EQ(m[1].go_past_ms, 430);
  EXPECT_EQ(m[1].regression_out, true);
  EXPECT_EQ(m[1].second_pass_ms, 180);
  EXPECT_EQ(m[1].rereading_ms, 180);
  EXPECT_EQ(m[1].regression_in, false);  // re-entered from region 0, an earlier region
  EXPECT_EQ(m[0].regression_in, true);   // entered again from region 1
}

// Second pass against rereading, by hand: a region read three times,
// (0,200) (1,100) (2,150) (1,120) (2,80) (1,90) (3,100).
//   region 1: first-pass run 100; later runs 120 and 90. Second pass = the next run only: 120;
//             rereading = every later fixation: 210 (= total 310 - gaze 100). They differ here,
//             so second pass computed as total - gaze duration would show.
//   region 2: first pass 150, second pass 80, rereading 80; regression in 0 (each run of region 2
//             begins after region 1, an earlier region).
TEST(ReadingMeasures, SecondPassIsOneRunRereadingIsEveryLaterRun) {
  const auto m = reading_measures(path({{0, 200}, {1, 100}, {2, 150}, {1, 120}, {2, 80}, {1, 90}, {3, 100}}), 4, 12);
  EXPECT_EQ(m[1].gaze_duration_ms, 100);
  EXPECT_EQ(m[1].second_pass_ms, 120);
  EXPECT_EQ(m[1].rereading_ms, 210);
  EXPECT_EQ(m[1].total_time_ms, 310);
  EXPECT_EQ(m[1].total_fixations, 3);
  EXPECT_EQ(m[1].regression_in, true);
  EXPECT_EQ(m[2].second_pass_ms, 80);
  EXPECT_EQ(m[2].rereading_ms, 80);
  EXPECT_EQ(m[2].regression_in, false);
  EXPECT_EQ(m[3].second_pass_ms, 0);  // read once: nothing after its first pass
  EXPECT_EQ(m[3].rereading_ms, 0);
}

// Regression in is decided by the fixation that entered a run, not by any
// earlier one; a region skipped in first pass keeps the time it was read
// later. By hand: (0,200) (2,180) (3,150) (1,120) (2,100) (4,200).
//   region 2: runs begin after region 0 and after region 1, both earlier: regression in 0, although
//             region 3, further on, was fixated before its second run.
//   region 1: skipped in first pass (regions 2 and 3 came first); entered from region 3: regression
//             in 1; total 120, rereading 120, second pass 120; first-pass values NA, count 0.
TEST(ReadingMeasures, RegressionInLooksAtTheEnteringFixationAndSkippedRegionsKeepLaterTime) {
  const auto m = reading_measures(path({{0, 200}, {2, 180}, {3, 150}, {1, 120}, {2, 100}, {4, 200}}), 5, 12);
  EXPECT_EQ(m[2].regression_in, false);
  EXPECT_EQ(m[1].regression_in, true);
  EXPECT_TRUE(m[1].skipped);
  EXPECT_EQ(m[1].total_time_ms, 120);
  EXPECT_EQ(m[1].rereading_ms, 120);
  EXPECT_EQ(m[1].second_pass_ms, 120);
  EXPECT_FALSE(m[1].gaze_duration_ms);
  EXPECT_EQ(m[1].first_pass_fixations, 0);
  EXPECT_EQ(m[2].gaze_duration_ms, 180);
  EXPECT_EQ(m[2].second_pass_ms, 100);
}

// A regressive incoming saccade keeps its sign: the region's first first-pass
// fixation at x = 130 comes from a fixation beyond the text at x = 400 on the
// same line: (130 - 400) / 12 = -22.5 characters; amplitude 3 - 1 = 2 degrees, unsigned.
TEST(ReadingMeasures, RegressiveIncomingSaccadeIsNegative) {
  auto p = path({{-1, 150}, {0, 200}});
  p[0].x_px = 400;
  p[0].line = 0;
  p[0].x_deg = 3.0;
  p[1].x_px = 130;
  p[1].x_deg = 1.0;
  const auto m = reading_measures(p, 1, 12);
  ASSERT_TRUE(m[0].incoming_saccade_chars);
  EXPECT_DOUBLE_EQ(*m[0].incoming_saccade_chars, -22.5);
  EXPECT_DOUBLE_EQ(*m[0].incoming_saccade_deg, 2.0);
}

// A refixation and a single fixation; landing position and incoming saccade:
// fixation 1 at x = 100 on region 0, fixation 2 at x = 130 on region 1 with a
// landing position of 1.5 characters: incoming saccade (130 - 100) / 12 = 2.5 characters.
TEST(ReadingMeasures, LandingPositionAndIncomingSaccade) {
  auto p = path({{0, 210}, {1, 180}, {1, 160}});
  p[1].landing_chars = 1.5;
  p[1].x_deg = 2.0;
  p[0].x_deg = 1.0;
  const auto m = reading_measures(p, 2, 12);
  EXPECT_EQ(m[1].landing_chars, 1.5);
  EXPECT_DOUBLE_EQ(*m[1].incoming_saccade_chars, 2.5);
  EXPECT_DOUBLE_EQ(*m[1].incoming_saccade_deg, 1.0);
  EXPECT_FALSE(m[1].single_fixation_ms);  // refixated in first pass
  EXPECT_EQ(m[1].gaze_duration_ms, 340);
  EXPECT_FALSE(m[0].incoming_saccade_deg);  // the trial's first fixation has none
}

// Invariants over 100 000 random scanpaths (definitions as above): TFT >= gaze
// >= first fixation; go-past >= gaze; rereading = TFT - gaze; a region skipped
// in first pass has no first-pass values; single fixation only with one
// first-pass fixation.
TEST(ReadingMeasures, InvariantsOverRandomScanpaths) {
  std::mt19937 rng(2024);
  std::uniform_int_distribution<int> regions(2, 10), length(0, 25);
  std::uniform_real_distribution<double> ms(40, 900), u(0, 1);
  for (int n = 0; n < 100000; ++n) {
    const int R = regions(rng);
    std::vector<PlacedFixation> p;
    int at = 0;
    const int len = length(rng);
    for (int k = 0; k < len; ++k) {
      const double r = u(rng);
      if (r < 0.6) at = std::min(R - 1, at + 1);
      else if (r < 0.75) at = std::max(0, at - 1 - static_cast<int>(u(rng) * 3));
      else if (r < 0.85) at = std::min(R - 1, at + 2);
      PlacedFixation f;
      f.region = u(rng) < 0.05 ? -1 : at;
      f.duration_ms = ms(rng);
      p.push_back(f);
    }
    for (const auto& m : reading_measures(p, R, 12)) {
      if (m.skipped) {
        ASSERT_FALSE(m.first_fixation_ms || m.gaze_duration_ms || m.go_past_ms || m.single_fixation_ms || m.regression_out ||
                     m.landing_chars);
        ASSERT_EQ(m.first_pass_fixations, 0);
        if (m.fixated) {
          ASSERT_NEAR(*m.rereading_ms, *m.total_time_ms, 1e-9);  // all its time came later
        }
      } else {
        ASSERT_TRUE(m.fixated);
        ASSERT_GE(*m.total_time_ms + 1e-9, *m.gaze_duration_ms);
        ASSERT_GE(*m.gaze_duration_ms + 1e-9, *m.first_fixation_ms);
        ASSERT_GE(*m.go_past_ms + 1e-9, *m.gaze_duration_ms);
        ASSERT_GE(*m.go_past_ms + 1e-9, *m.selective_go_past_ms);
        ASSERT_NEAR(*m.rereading_ms, *m.total_time_ms - *m.gaze_duration_ms, 1e-9);
        ASSERT_EQ(m.single_fixation_ms.has_value(), m.first_pass_fixations == 1);
      }
      ASSERT_EQ(m.fixated, m.total_time_ms.has_value());
      ASSERT_EQ(m.fixated, m.total_fixations > 0);
      ASSERT_EQ(m.fixated, m.regression_in.has_value());
      ASSERT_EQ(m.fixated, m.second_pass_ms.has_value());
      if (m.fixated) {
        ASSERT_LE(*m.second_pass_ms, *m.rereading_ms + 1e-9);
      }
    }
  }
}

// Mapping: lines by the nearest centre (or only inside a line), margins by
// the nearest region within the allowance, landing positions in characters.
TEST(RegionMapper, LinesMarginsAndLanding) {
  TextLayoutSpec spec;
  spec.char_width_px = 10;
  spec.line_height_px = 40;
  spec.left_margin_px = 100;
  spec.first_line_top_px = 200;
  spec.wrap_width_chars = 12;
  // "aa bbb / cccc dd / e": line 0 "aa bbb cccc" (columns 0-10), line 1 "dd e".
  const RegionLayout L = region_layout_from_text(lay_out_item("x", "aa bbb / cccc dd / e", spec), spec, {});
  ASSERT_EQ(L.regions[1].boxes.size(), 2u);  // "cccc" on line 0, "dd" on line 1
  RegionSpec rs;
  rs.layout = spec;
  auto at = [&](double x, double y) { return place_fixation(L, x, y, rs); };
  EXPECT_EQ(at(105, 220).region, 0);  // 'a' at column 0
  EXPECT_EQ(at(165, 220).region, 1);  // column 6, the space before "cccc", belongs to region 1
  EXPECT_EQ(at(105, 260).region, 1);  // "dd" on line 1
  EXPECT_EQ(at(135, 260).region, 2);  // "e"
  EXPECT_EQ(at(105, 238).line, 0);
  EXPECT_EQ(at(105, 242).line, 1);
  EXPECT_EQ(at(105, 330).line, -1);   // 70 px from line 1's centre (260): more than one line height
  EXPECT_EQ(at(85, 220).region, 0);   // 15 px left of the text: within two characters
  EXPECT_EQ(at(75, 220).region, -1);  // 25 px: beyond
  rs.margin_nearest = false;
  EXPECT_EQ(at(95, 220).region, -1);
  rs.off_line_nearest = false;
  EXPECT_EQ(at(105, 199).line, -1);   // above line 0's box
  // Landing: region 1's first letter 'c' starts at 100 + 7 * 10 = 170; x = 185 is 1.5 characters in.
  EXPECT_DOUBLE_EQ(*at(185, 220).landing_chars, 1.5);
  // Region 1 wraps: "cccc " (5 characters from its first letter) on line 0, then "dd" on line 1
  // from x = 100. A fixation at x = 105 on line 1 lands half a character into 'd': 5.5 characters.
  rs.margin_nearest = true;
  rs.off_line_nearest = true;
  EXPECT_EQ(L.regions[1].line, 0);
  EXPECT_EQ(L.regions[1].last_line, 1);
  ASSERT_TRUE(at(105, 260).landing_chars);
  EXPECT_DOUBLE_EQ(*at(105, 260).landing_chars, 5.5);
}

// Edges, decided (common practice, no source: boxes are half-open, so that
// every x on a line belongs to exactly one region): a box holds its left
// edge and not its right one; a line holds its top and bottom edges. Layout
// as in LinesMarginsAndLanding: region 0 "aa bbb" is columns 0-5 (x 100 to
// 160), region 1 starts with the space at column 6 (x 160); line 0 spans
// y 200 to 240.
TEST(RegionMapper, BoxesHoldTheirLeftEdgeLinesBothEdges) {
  TextLayoutSpec spec;
  spec.char_width_px = 10;
  spec.line_height_px = 40;
  spec.left_margin_px = 100;
  spec.first_line_top_px = 200;
  spec.wrap_width_chars = 12;
  const RegionLayout L = region_layout_from_text(lay_out_item("x", "aa bbb / cccc dd / e", spec), spec, {});
  RegionSpec rs;
  rs.layout = spec;
  rs.off_line_nearest = false;  // only y inside a line counts
  EXPECT_EQ(place_fixation(L, 160, 220, rs).region, 1);
  EXPECT_EQ(place_fixation(L, 159.99, 220, rs).region, 0);
  EXPECT_EQ(place_fixation(L, 100, 220, rs).region, 0);
  EXPECT_EQ(place_fixation(L, 105, 200, rs).line, 0);
  EXPECT_EQ(place_fixation(L, 105, 199.99, rs).line, -1);
  // Beside the text: the default margin is two characters (20 px here).
  rs.off_line_nearest = true;
  EXPECT_EQ(place_fixation(L, 81, 220, rs).region, 0);
  EXPECT_EQ(place_fixation(L, 79, 220, rs).region, -1);
}

// A proportional font from an advance table, worked by hand: 'm' 16 px, 'i' 4 px,
// others 10 px, margin 0, lines 50 px wide. "mim / iii": m 0-16, i 16-20, m 20-36,
// the space 36-46; "iii" (12 px) would end at 58 > 50, so it wraps: 0-4, 4-8, 8-12 on line 2.
TEST(RegionMapper, ProportionalFontFromAnAdvanceTable) {
  TextLayoutSpec spec;
  spec.char_width_px = 10;
  spec.left_margin_px = 0;
  spec.first_line_top_px = 0;
  spec.line_height_px = 30;
  spec.wrap_width_chars = 5;
  spec.advance_px = {{'m', 16}, {'i', 4}};
  const LaidOutItem item = lay_out_item("p", "mim / iii", spec);
  EXPECT_DOUBLE_EQ(item.chars[2].left_px, 20);
  EXPECT_EQ(item.chars[4].line, 1);
  EXPECT_DOUBLE_EQ(item.chars[6].left_px, 8);
  const RegionLayout L = region_layout_from_text(item, spec, {});
  ASSERT_EQ(L.regions[0].boxes.size(), 1u);
  EXPECT_DOUBLE_EQ(L.regions[0].boxes[0].right_px, 36);
  ASSERT_EQ(L.regions[1].boxes.size(), 1u);  // the space left on line 1 is not part of the box
  EXPECT_EQ(L.regions[1].line, 1);
  EXPECT_DOUBLE_EQ(L.regions[1].boxes[0].right_px, 12);
  RegionSpec rs;
  EXPECT_EQ(place_fixation(L, 10, 45, rs).region, 1);
  EXPECT_EQ(place_fixation(L, 18, 15, rs).region, 0);
  EXPECT_THROW(lay_out_item("p", "mmmm", spec), std::invalid_argument);  // 64 px > 50 px
}

// Every measure column takes its value from the field of the same name (the
// tables find values by position; a shifted position would put one measure's
// values under another's name). Booleans as 0/1, absent as NA (the column
// definitions in the README, no source).
TEST(MeasureTable, EachMeasureNameReadsItsOwnField) {
  MeasureRow r;
  r.first_fixation_ms = 101;
  r.single_fixation_ms = 102;
  r.gaze_duration_ms = 103;
  r.go_past_ms = 104;
  r.selective_go_past_ms = 105;
  r.total_time_ms = 106;
  r.rereading_ms = 107;
  r.second_pass_ms = 108;
  r.skipped = false;
  r.fixated = true;
  r.first_pass_fixations = 111;
  r.total_fixations = 112;
  r.regression_out = true;
  r.regression_in = std::nullopt;
  r.landing_chars = 115;
  r.incoming_saccade_chars = 116;
  r.incoming_saccade_deg = 117;
  const std::vector<std::pair<std::string, std::optional<double>>> expected = {
      {"first_fixation_ms", 101},   {"single_fixation_ms", 102},   {"gaze_duration_ms", 103},     {"go_past_ms", 104},
      {"selective_go_past_ms", 105}, {"total_time_ms", 106},        {"rereading_ms", 107},         {"second_pass_ms", 108},
      {"skipped_first_pass", 0},     {"fixated", 1},                {"first_pass_fixations", 111}, {"total_fixations", 112},
      {"regression_out", 1},         {"regression_in", std::nullopt}, {"landing_chars", 115},    {"incoming_saccade_chars", 116},
      {"incoming_saccade_deg", 117}};
  ASSERT_EQ(measure_names().size(), expected.size());
  for (std::size_t k = 0; k < expected.size(); ++k) {
    EXPECT_EQ(measure_names()[k], expected[k].first);
    EXPECT_EQ(measure_value(r, k), expected[k].second) << expected[k].first;
    EXPECT_EQ(measure_value(r, expected[k].first), expected[k].second) << expected[k].first;
  }
  EXPECT_EQ(measure_value(r, std::string("no_such_measure")), std::nullopt);
}
