// Where post-saccadic oscillation samples go ([detection] pso): a class of
// their own (the default), or folded into the fixation after them or the
// saccade before them. Labs differ (our option, no single source; hand
// coders and Nystrom & Holmqvist 2010 keep glissades apart, from memory).

#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "app/protocol_parser.h"
#include "detectors/event_detector.h"
#include "pipeline/input_error.h"

using namespace gazemill;

namespace {

const std::string kBase =
    "[input]\nfiles=['x']\n[input.table]\ntime_column='t'\n[input.table.left]\nx_column='x'\ny_column='y'\n"
    "[screen]\nwidth_px=10\nheight_px=10\nwidth_mm=10\nheight_mm=10\nviewing_distance_mm=10\n"
    "[trials]\nstart='a'\nend='b'\n";  // 16 lines

std::string letters(const std::vector<SampleLabel>& labels) {
  std::string s;
  for (auto l : labels) s += "FSPBLo"[static_cast<int>(l)];
  return s;
}

}  // namespace

TEST(PsoSetting, ParsedFromTheDetectionSection) {
  EXPECT_EQ(parse_protocol_text(kBase, "p.toml").detection.pso, PsoHandling::separate);
  EXPECT_EQ(parse_protocol_text(kBase + "[detection]\npso = 'separate'\n", "p.toml").detection.pso, PsoHandling::separate);
  EXPECT_EQ(parse_protocol_text(kBase + "[detection]\npso = 'fixation'\n", "p.toml").detection.pso, PsoHandling::fixation);
  EXPECT_EQ(parse_protocol_text(kBase + "[detection]\npso = 'saccade'\n", "p.toml").detection.pso, PsoHandling::saccade);
}

TEST(PsoSetting, BadValuesNameTheKeyAndLine) {
  auto expect_error = [](const std::string& extra, std::size_t line, const std::string& part) {
    try {
      parse_protocol_text(kBase + extra, "p.toml");
      FAIL() << extra;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().field, "detection.pso") << e.what();
      EXPECT_EQ(e.where().line, line) << e.what();
      EXPECT_NE(std::string(e.what()).find(part), std::string::npos) << e.what();
    }
  };
  expect_error("[detection]\nmethod = 'ivt'\npso = 'glissade'\n", 19, "expected \"separate\", \"fixation\" or \"saccade\", found \"glissade\"");
  expect_error("[detection]\npso = 'Fixation'\n", 18, "found \"Fixation\"");
  expect_error("[detection]\npso = 1\n", 18, "");  // not a string
  expect_error("[detection]\npso = ''\n", 18, "found \"\"");
}

// Hand-made labels at 1000 Hz through the shared clean-up: 50 fixation
// samples, a 15-sample saccade, a 10-sample oscillation and 50 fixation
// samples. Folded into the fixation, the fixation after the saccade starts
// at the oscillation; into the saccade, the saccade runs to its end. An
// oscillation that follows no saccade is dropped ("other") either way.
TEST(PsoSetting, FoldsTheOscillationIntoTheChosenEvent) {
  GazeTrace g;
  for (int i = 0; i < 125; ++i) {
    g.time_us.push_back(i * 1000);
    g.x_deg.push_back(i < 65 ? 0.0 : 2.0);
    g.y_deg.push_back(0.0);
    g.x_px.push_back(0.0);
    g.y_px.push_back(0.0);
    g.pupil.push_back(1000.f);
    g.valid.push_back(1);
  }
  g.interval_us = 1000;
  const std::string with_saccade = std::string(50, 'F') + std::string(15, 'S') + std::string(10, 'P') + std::string(50, 'F');
  const std::string without = std::string(50, 'F') + std::string(15, 'F') + std::string(10, 'P') + std::string(50, 'F');
  auto tidy = [&](const std::string& in, PsoHandling pso) {
    std::vector<SampleLabel> labels;
    for (char c : in) labels.push_back(c == 'F' ? SampleLabel::fixation : c == 'S' ? SampleLabel::saccade : SampleLabel::pso);
    EventParams p;
    p.pso = pso;
    p.max_velocity_deg_s = 0;  // the positions here are not a real saccade
    tidy_labels(g, p, labels);
    return letters(labels);
  };
  EXPECT_EQ(tidy(with_saccade, PsoHandling::separate), with_saccade);
  EXPECT_EQ(tidy(with_saccade, PsoHandling::fixation), std::string(50, 'F') + std::string(15, 'S') + std::string(60, 'F'));
  EXPECT_EQ(tidy(with_saccade, PsoHandling::saccade), std::string(50, 'F') + std::string(25, 'S') + std::string(50, 'F'));
  for (PsoHandling pso : {PsoHandling::separate, PsoHandling::fixation, PsoHandling::saccade}) {
    EXPECT_EQ(tidy(without, pso).substr(65, 10), std::string(10, 'o')) << "an orphan oscillation becomes other";
  }
}
