// The passage and scanpath generator for the drift benchmark
// (sim/passage_scanpath): its own definitions, checked on its output. The
// distortions are defined there (after Carr et al. 2022's kinds); these tests
// check that the generator does what its header says, not that any drift
// method works.

#include <gtest/gtest.h>

#include <cmath>

#include "sim/passage_scanpath.h"

using namespace gazemill::sim;

TEST(PassageScanpath, SameSeedSamePassageAndScanpath) {
  std::mt19937_64 a(7), b(7);
  const Passage pa = generate_passage({}, a), pb = generate_passage({}, b);
  ScanpathDistortion d;
  d.noise_sd_px = 5;
  d.between_line_regression_probability = 0.1;
  const auto sa = generate_passage_scanpath(pa, {}, d, a), sb = generate_passage_scanpath(pb, {}, d, b);
  ASSERT_EQ(sa.size(), sb.size());
  for (std::size_t i = 0; i < sa.size(); ++i) {
    EXPECT_EQ(sa[i].x_px, sb[i].x_px);
    EXPECT_EQ(sa[i].y_px, sb[i].y_px);
    EXPECT_EQ(sa[i].true_line, sb[i].true_line);
  }
}

// 5-12 lines, words inside a line's width and not overlapping, lines spaced as asked.
TEST(PassageScanpath, PassagesHaveFiveToTwelveLines) {
  std::mt19937_64 rng(1);
  PassageParams p;
  p.line_spacing_px = 64;
  for (int k = 0; k < 50; ++k) {
    const Passage passage = generate_passage(p, rng);
    ASSERT_GE(passage.line_y_px.size(), 5u);
    ASSERT_LE(passage.line_y_px.size(), 12u);
    for (std::size_t l = 0; l < passage.line_y_px.size(); ++l) {
      if (l > 0) {
        EXPECT_DOUBLE_EQ(passage.line_y_px[l] - passage.line_y_px[l - 1], 64.0);
      }
      const auto& words = passage.words[l];
      ASSERT_FALSE(words.empty());
      EXPECT_LE(words.back().right_px, p.left_px + p.line_width_chars * p.char_width_px);
      for (std::size_t w = 1; w < words.size(); ++w) EXPECT_GT(words[w].left_px, words[w - 1].right_px);
    }
  }
}

// Each distortion alone moves y exactly as the header defines it.
TEST(PassageScanpath, DistortionsFollowTheirDefinitions) {
  std::mt19937_64 rng(3);
  const Passage passage = generate_passage({}, rng);
  const double y0 = passage.line_y_px.front();
  ScanpathDistortion none, offset, slope, shift;
  offset.offset_px = 17;
  slope.slope = 0.05;
  shift.shift = 0.1;
  for (const auto& f : generate_passage_scanpath(passage, {}, none, rng)) EXPECT_EQ(f.y_px, f.true_y_px);
  for (const auto& f : generate_passage_scanpath(passage, {}, offset, rng)) EXPECT_NEAR(f.y_px - f.true_y_px, 17.0, 1e-9);
  for (const auto& f : generate_passage_scanpath(passage, {}, slope, rng)) {
    EXPECT_NEAR(f.y_px - f.true_y_px, 0.05 * (f.x_px - passage.left_px), 1e-9);
  }
  for (const auto& f : generate_passage_scanpath(passage, {}, shift, rng)) EXPECT_NEAR(f.y_px - f.true_y_px, 0.1 * (f.true_y_px - y0), 1e-9);
}

// Without regressions the lines are read in order, each at least once, and
// every fixation lies on its true word; with between-line regressions the
// true line sometimes goes back; with within-line ones x sometimes goes back
// on the same line while the true line never does.
TEST(PassageScanpath, RegressionsAreWhatTheirNamesSay) {
  std::mt19937_64 rng(11);
  const Passage passage = generate_passage({}, rng);
  auto count_back = [](const std::vector<SimulatedFixation>& s, bool lines) {
    int back = 0;
    for (std::size_t i = 1; i < s.size(); ++i) {
      if (lines ? s[i].true_line < s[i - 1].true_line
                : (s[i].true_line == s[i - 1].true_line && s[i].true_word < s[i - 1].true_word && s[i].true_word + 1 != s[i - 1].true_word)) {
        ++back;
      }
    }
    return back;
  };
  const auto plain = generate_passage_scanpath(passage, {}, {}, rng);
  EXPECT_EQ(count_back(plain, true), 0);
  EXPECT_EQ(plain.front().true_line, 0);
  EXPECT_EQ(plain.back().true_line, static_cast<int>(passage.line_y_px.size()) - 1);
  for (const auto& f : plain) {
    const auto& w = passage.words[static_cast<std::size_t>(f.true_line)][static_cast<std::size_t>(f.true_word)];
    EXPECT_GE(f.x_px, w.left_px);
    EXPECT_LE(f.x_px, w.right_px);
  }
  ScanpathDistortion between, within;
  between.between_line_regression_probability = 0.3;
  within.within_line_regression_probability = 0.5;
  EXPECT_GT(count_back(generate_passage_scanpath(passage, {}, between, rng), true), 0);
  const auto w = generate_passage_scanpath(passage, {}, within, rng);
  EXPECT_EQ(count_back(w, true), 0);
  EXPECT_GT(count_back(w, false), 0);
}

// Laid-out text as a passage, worked by hand: "aa bbb cccc" at 10 px a
// character, 12 characters a line, lines 30 px apart from y = 100: "cccc"
// (columns 7..10) still fits line 1; "dd" starts line 2.
TEST(PassageScanpath, PassageFromLayoutKeepsLinesAndWordBoxes) {
  gazemill::TextLayoutSpec spec;
  spec.char_width_px = 10;
  spec.line_height_px = 30;
  spec.left_margin_px = 50;
  spec.first_line_top_px = 100;
  spec.wrap_width_chars = 12;
  const auto item = gazemill::lay_out_item("x", "aa / bbb / cccc / dd", spec);
  const Passage p = passage_from_layout(item, spec);
  ASSERT_EQ(p.line_y_px.size(), 2u);
  EXPECT_DOUBLE_EQ(p.line_y_px[0], 115.0);
  EXPECT_DOUBLE_EQ(p.line_y_px[1], 145.0);
  EXPECT_DOUBLE_EQ(p.line_spacing_px, 30.0);
  ASSERT_EQ(p.words[0].size(), 3u);
  ASSERT_EQ(p.words[1].size(), 1u);
  EXPECT_DOUBLE_EQ(p.words[0][1].left_px, 80.0);   // "bbb" at columns 3..5
  EXPECT_DOUBLE_EQ(p.words[0][1].right_px, 110.0);
  EXPECT_EQ(p.words[0][2].letters, 4);
  EXPECT_DOUBLE_EQ(p.words[1][0].left_px, 50.0);
  // A scanpath over it keeps every fixation on a word of its true line.
  std::mt19937_64 rng(3);
  for (const auto& f : generate_passage_scanpath(p, {}, {}, rng)) {
    const auto& w = p.words[static_cast<std::size_t>(f.true_line)][static_cast<std::size_t>(f.true_word)];
    EXPECT_GE(f.x_px, w.left_px);
    EXPECT_LE(f.x_px, w.right_px);
    EXPECT_DOUBLE_EQ(f.y_px, p.line_y_px[static_cast<std::size_t>(f.true_line)]);
  }
}
