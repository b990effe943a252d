// The simulated reading study: determinism, its design (factors, cells,
// Latin-square lists, questions), its text layout and passages, the files it
// writes and their conventions, streaming, and its summary figures against
// published facts about skilled silent reading.

#include <gtest/gtest.h>
#include <zlib.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

#include "app/protocol_parser.h"
#include "app/simulate_command.h"
#include "detectors/visual_angle.h"
#include "io/region_files.h"
#include "io/study_store.h"
#include "io/tsv_table.h"
#include "sim/study_export.h"
#include "sim/study_simulator.h"
#include "test_support.h"
#include "tests/stage_helpers.h"

using namespace gazemill;
using namespace gazemill::sim;
using gazemill::test_support::TempDir;
namespace fs = std::filesystem;

namespace {

SimulationConfig config(int participants, double rate, std::uint64_t seed, std::size_t items = 12, std::size_t passages = 0) {
  SimulationConfig c;
  c.design = demo_design(items, passages);
  c.design.participants = participants;
  c.signal.sample_rate_hz = rate;
  c.seed = seed;
  return c;
}

std::string read_file(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

std::string read_gz(const fs::path& p) {
  gzFile f = gzopen(p.c_str(), "rb");
  std::string text;
  char buf[1 << 16];
  int n;
  while ((n = gzread(f, buf, sizeof buf)) > 0) text.append(buf, static_cast<std::size_t>(n));
  gzclose(f);
  return text;
}

// Figures of the text fixations (not the start marker) of the sentence trials of a study.
struct ReadingSummary {
  double mean_fixation_ms = 0;
  double mean_forward_saccade_chars = 0;
  double regression_share = 0;   // of saccades between text fixations within a line
  double skipped_word_share = 0; // words never fixated in first pass
  std::map<std::string, double> target_first_fixation_ms;  // by level of either factor
  std::map<std::string, double> target_skipping;           // by level of either factor
};

ReadingSummary summarise(const SimulatedStudy& st) {
  ReadingSummary s;
  double dur = 0, fwd = 0;
  int n_fix = 0, n_fwd = 0, n_reg = 0, n_sac = 0, words = 0, skipped = 0;
  std::map<std::string, std::pair<double, int>> target, skips;
  for (const auto& sr : st.recordings) {
    for (std::size_t k = 0; k < sr.trials.size(); ++k) {
      const TrialTruth& tt = sr.trials[k];
      if (tt.passage) continue;
      const Trial& trial = sr.recording.trials[k];
      const Stimulus& stim = st.stimulus(tt);
      const LaidOutItem& li = stim.layout[tt.variant];
      const int t = stim.target_region[tt.variant];
      std::vector<const TrueFixation*> fx;
      for (const auto& f : sr.truth.fixations) {
        if (f.trial == trial.id && f.char_index >= 0) fx.push_back(&f);
      }
      for (std::size_t i = 0; i < fx.size(); ++i) {
        dur += static_cast<double>(fx[i]->end_us - fx[i]->start_us) / 1000.0;
        ++n_fix;
        if (i == 0 || fx[i]->line != fx[i - 1]->line) continue;
        const int d = fx[i]->char_index - fx[i - 1]->char_index;
        ++n_sac;
        if (d < 0) ++n_reg;
        if (d > 0) {
          fwd += d;
          ++n_fwd;
        }
      }
      // First-pass skipping by word: a word is skipped when a later word is fixated first.
      std::vector<int> word_of(li.chars.size(), -1);
      for (std::size_t w = 0; w < li.words.size(); ++w) {
        for (int c = li.words[w].first_char; c <= li.words[w].last_char; ++c) word_of[static_cast<std::size_t>(c)] = static_cast<int>(w);
      }
      std::vector<bool> fixated_first_pass(li.words.size(), false);
      int furthest = -1;
      for (const auto* f : fx) {
        const int w = word_of[static_cast<std::size_t>(f->char_index)];
        if (w > furthest) {
          fixated_first_pass[static_cast<std::size_t>(w)] = true;
          furthest = w;
        }
      }
      for (bool b : fixated_first_pass) {
        ++words;
        skipped += !b;
      }
      // The target's first fixation in first pass, or its skipping.
      bool target_skipped = true;
      for (const auto* f : fx) {
        if (f->region == t) {
          target_skipped = false;
          for (const char* factor : {"frequency", "preview"}) {
            target[trial.variable(factor)].first += static_cast<double>(f->end_us - f->start_us) / 1000.0;
            ++target[trial.variable(factor)].second;
          }
          break;
        }
        if (f->region > t) break;
      }
      for (const char* factor : {"frequency", "preview"}) {
        skips[trial.variable(factor)].first += target_skipped;
        ++skips[trial.variable(factor)].second;
      }
    }
  }
  s.mean_fixation_ms = dur / n_fix;
  s.mean_forward_saccade_chars = fwd / n_fwd;
  s.regression_share = static_cast<double>(n_reg) / n_sac;
  s.skipped_word_share = static_cast<double>(skipped) / words;
  for (const auto& [c, v] : target) s.target_first_fixation_ms[c] = v.first / v.second;
  for (const auto& [c, v] : skips) s.target_skipping[c] = v.first / v.second;
  return s;
}

}  // namespace

TEST(TextLayout, HandWorkedMonospacedLayout) {
  TextLayoutSpec spec;
  spec.char_width_px = 10;
  spec.line_height_px = 30;
  spec.left_margin_px = 50;
  spec.first_line_top_px = 100;
  spec.wrap_width_chars = 12;
  // "aa bbb / cccc dd / e": text "aa bbb cccc dd e"; "cccc" no longer fits on line 0
  // (columns 7..10 would fit in 12 — it does), "dd" needs columns 12..13 -> line 1.
  const LaidOutItem li = lay_out_item("x", "aa bbb / cccc dd / e", spec);
  EXPECT_EQ(li.text, "aa bbb cccc dd e");
  ASSERT_EQ(li.words.size(), 5u);
  EXPECT_EQ(li.words[2].line, 0);
  EXPECT_EQ(li.words[3].line, 1);
  EXPECT_EQ(li.chars[li.words[3].first_char].column, 0);
  EXPECT_DOUBLE_EQ(li.chars[0].centre_x_px, 55.0);   // 50 + 0.5 * 10
  EXPECT_DOUBLE_EQ(li.chars[0].centre_y_px, 115.0);  // 100 + 0.5 * 30
  ASSERT_EQ(li.regions.size(), 3u);
  EXPECT_EQ(li.regions[1].label, "cccc dd");
  EXPECT_EQ(li.regions[1].line, 0);
  EXPECT_DOUBLE_EQ(li.regions[1].top_px, 100.0);
  EXPECT_DOUBLE_EQ(li.regions[1].bottom_px, 160.0);  // wraps onto line 1
  EXPECT_EQ(li.regions[2].line, 1);
  EXPECT_EQ(li.line_count, 2);
  EXPECT_THROW(lay_out_item("x", "a / / b", spec), std::invalid_argument);
}

TEST(Simulator, SameSeedSameStudyOtherSeedOtherStudy) {
  const auto a = simulate_study(config(2, 500, 7, 12, 1));
  const auto b = simulate_study(config(2, 500, 7, 12, 1));
  const auto c = simulate_study(config(2, 500, 8, 12, 1));
  ASSERT_EQ(a.recordings.size(), 2u);
  // Compared as bytes: lost samples are NaN, and NaN != NaN.
  auto bytes = [](const SimulatedStudy& s) {
    const auto& x = s.recordings[1].recording.samples.left.x_px;
    return std::string(reinterpret_cast<const char*>(x.data()), x.size() * sizeof(float));
  };
  EXPECT_EQ(bytes(a), bytes(b));
  EXPECT_EQ(a.recordings[1].truth.labels, b.recordings[1].truth.labels);
  EXPECT_NE(bytes(a), bytes(c));
  // A participant does not depend on how many others there are.
  const auto d = simulate_study(config(3, 500, 7, 12, 1));
  EXPECT_EQ(bytes(a), std::string(reinterpret_cast<const char*>(d.recordings[1].recording.samples.left.x_px.data()),
                                   d.recordings[1].recording.samples.left.x_px.size() * sizeof(float)));
}

// Cells are the product of the factors' levels, the first factor varying
// slowest; the Latin square puts each item in every cell once across the
// lists, and each list in every cell equally often (worked by hand for a
// 3 x 2 design).
TEST(StudyDesign, CellsAreTheProductOfTheLevelsAndListsAreALatinSquare) {
  StudyDesign d;
  d.factors = {{"a", {{"a1", {}}, {"a2", {}}, {"a3", {}}}, false}, {"b", {{"b1", {}}, {"b2", {}}}, false}};
  ASSERT_EQ(d.cells(), 6u);
  EXPECT_EQ(d.lists(), 6u);
  EXPECT_EQ(d.level_names(0), (std::vector<std::string>{"a1", "b1"}));
  EXPECT_EQ(d.level_names(1), (std::vector<std::string>{"a1", "b2"}));
  EXPECT_EQ(d.level_names(2), (std::vector<std::string>{"a2", "b1"}));
  EXPECT_EQ(d.level_names(5), (std::vector<std::string>{"a3", "b2"}));
  for (std::size_t item = 0; item < 12; ++item) {
    std::set<std::size_t> cells;
    for (std::size_t list = 0; list < 6; ++list) cells.insert(cell_for(list, item, 6));
    EXPECT_EQ(cells.size(), 6u) << "item " << item << " is in every cell across the lists";
  }
  for (std::size_t list = 0; list < 6; ++list) {
    std::map<std::size_t, int> per_cell;
    for (std::size_t item = 0; item < 12; ++item) ++per_cell[cell_for(list, item, 6)];
    for (const auto& [cell, n] : per_cell) EXPECT_EQ(n, 2) << "list " << list << " cell " << cell;
  }
  EXPECT_EQ(list_of(0, 4), 0u);
  EXPECT_EQ(list_of(5, 4), 1u);
  // Effects of the levels add; skipping factors multiply.
  d.factors[0].levels[1].effect.fixation_ms = 10;
  d.factors[0].levels[1].effect.skip_factor = 0.5;
  d.factors[1].levels[1].effect.fixation_ms = 5;
  d.factors[1].levels[1].effect.skip_factor = 0.5;
  EXPECT_DOUBLE_EQ(d.effect_of(3).fixation_ms, 15.0);  // a2, b2
  EXPECT_DOUBLE_EQ(d.effect_of(3).skip_factor, 0.25);
  // Names the protocol could not capture, and variants that do not match the text factor.
  StudyDesign bad = d;
  bad.factors[0].name = "list";
  EXPECT_THROW(bad.validate(), std::invalid_argument);
  bad = d;
  bad.factors[1].name = "two words";
  EXPECT_THROW(bad.validate(), std::invalid_argument);
  bad = demo_design(4, 0);
  bad.items[0].marked_text = "a / [b|c|d] / e / f";
  EXPECT_THROW(bad.validate(), std::invalid_argument);
  bad = demo_design(4, 1);
  bad.passages[0].id = bad.items[0].id;
  EXPECT_THROW(bad.validate(), std::invalid_argument);
  EXPECT_THROW(demo_design(bundled_sentence_items().size() + 1, 0), std::invalid_argument);
}

TEST(Simulator, EachParticipantSeesEveryItemOnceInTheCellOfTheirList) {
  const auto st = simulate_study(config(8, 250, 3, 12, 2));
  std::map<std::string, std::set<std::string>> cells_of_item;
  for (std::size_t p = 0; p < st.recordings.size(); ++p) {
    const auto& sr = st.recordings[p];
    EXPECT_EQ(sr.list, p % 4);
    ASSERT_EQ(sr.recording.trials.size(), 14u);
    std::map<std::string, int> seen, per_cell;
    for (std::size_t k = 0; k < sr.recording.trials.size(); ++k) {
      const Trial& t = sr.recording.trials[k];
      ++seen[t.variable("item")];
      EXPECT_EQ(t.variable("list"), std::to_string(p % 4 + 1));
      if (t.variable("block") == "sentence") {
        const std::string cell = t.variable("frequency") + "," + t.variable("preview");
        ++per_cell[cell];
        cells_of_item[t.variable("item")].insert(cell);
        // The text shown is the frequency level's variant.
        const Stimulus& s = st.stimulus(sr.trials[k]);
        EXPECT_EQ(sr.trials[k].variant, t.variable("frequency") == "rare" ? 1u : 0u);
        EXPECT_NE(s.marked_text[0], s.marked_text[1]);
      } else {
        EXPECT_EQ(t.variable("block"), "passage");
        EXPECT_FALSE(t.variables.count("frequency")) << "passages have no factor levels";
        EXPECT_FALSE(t.variables.count("preview"));
        EXPECT_GE(k, 12u) << "passages come after the sentences";
      }
    }
    EXPECT_EQ(seen.size(), 14u);
    for (const auto& [item, n] : seen) EXPECT_EQ(n, 1) << item;
    ASSERT_EQ(per_cell.size(), 4u);
    for (const auto& [cell, n] : per_cell) EXPECT_EQ(n, 3) << cell;
    // A question after a third of the trials, answered 0 or 1.
    int questions = 0;
    for (const auto& t : sr.recording.trials) {
      if (t.variables.count("answer_correct")) {
        ++questions;
        EXPECT_TRUE(t.variable("answer_correct") == "0" || t.variable("answer_correct") == "1");
      }
    }
    EXPECT_EQ(questions, 5);  // round(14 / 3)
    EXPECT_GE(sr.answer_accuracy, 0.55);
    EXPECT_LE(sr.answer_accuracy, 0.99);
  }
  for (const auto& [item, cells] : cells_of_item) EXPECT_EQ(cells.size(), 4u) << "item " << item << " in every cell across the lists";
}

// Answers are right with the participant's own probability: over many
// questions the share of right answers follows it.
TEST(Simulator, AnswersFollowEachParticipantsAccuracy) {
  auto cfg = config(6, 100, 5, 120, 0);
  cfg.design.question_share = 1.0;
  cfg.design.accuracy_sd = 0.2;
  const auto st = simulate_study(cfg);
  double lowest = 1, highest = 0;
  for (const auto& sr : st.recordings) {
    double right = 0;
    for (const auto& t : sr.trials) right += *t.answer_correct;
    const double share = right / static_cast<double>(sr.trials.size());
    EXPECT_NEAR(share, sr.answer_accuracy, 3 * std::sqrt(sr.answer_accuracy * (1 - sr.answer_accuracy) / 120.0) + 0.01);
    lowest = std::min(lowest, sr.answer_accuracy);
    highest = std::max(highest, sr.answer_accuracy);
  }
  EXPECT_GT(highest - lowest, 0.1) << "accuracy differs between participants";
}

// Rayner (1998, Psychological Bulletin 124(3)): in skilled silent reading the mean
// fixation lasts about 225-250 ms and saccades move about 7-9 character spaces
// forward; about 10-15 % of saccades are regressions (from memory, Rayner 1998).
// Brysbaert, Drieghe & Vitu (2005): about a third of words are skipped.
// The bands below are those figures widened to allow for our short items.
// The design's effects, in the direction the literature reports them (Rayner
// 1998; Schotter, Angele & Rayner 2012; from memory): rare words and invalid
// previews lengthen the target's first fixation and make skipping it rarer.
TEST(Simulator, SummaryFiguresMatchPublishedReadingFacts) {
  const ReadingSummary s = summarise(simulate_study(config(32, 250, 11, 24, 0)));
  EXPECT_GE(s.mean_fixation_ms, 200.0);
  EXPECT_LE(s.mean_fixation_ms, 260.0);
  EXPECT_GE(s.mean_forward_saccade_chars, 6.0);
  EXPECT_LE(s.mean_forward_saccade_chars, 10.0);
  EXPECT_GE(s.regression_share, 0.08);
  EXPECT_LE(s.regression_share, 0.18);
  EXPECT_GE(s.skipped_word_share, 0.20);
  EXPECT_LE(s.skipped_word_share, 0.45);
  EXPECT_GT(s.target_first_fixation_ms.at("rare"), s.target_first_fixation_ms.at("frequent") + 15.0);
  EXPECT_GT(s.target_first_fixation_ms.at("invalid"), s.target_first_fixation_ms.at("valid") + 15.0);
  EXPECT_LT(s.target_skipping.at("rare"), s.target_skipping.at("frequent"));
  EXPECT_LT(s.target_skipping.at("invalid"), s.target_skipping.at("valid"));
}

// Saccade duration follows D = 2.2 A + 21 ms (Carpenter 1988, Movements of the
// Eyes; from memory, see methods.md section 6): 25.4 ms at 2 deg, 43 ms at 10 deg.
TEST(Simulator, SaccadesFollowTheMainSequenceDuration) {
  EXPECT_NEAR(saccade_duration_ms(2.0), 25.4, 1e-9);
  EXPECT_NEAR(saccade_duration_ms(10.0), 43.0, 1e-9);
  auto cfg = config(1, 1000, 5, 12, 1);
  cfg.signal.blink_probability_per_saccade = 0;
  const auto st = simulate_study(cfg);
  const auto& sr = st.recordings[0];
  const VisualAngle angle(cfg.screen);
  const double ppd = angle.pixels_per_degree_at_centre();
  // Compare each saccade's labelled run of samples with the duration its amplitude implies.
  const auto& L = sr.truth.labels;
  const auto& fx = sr.truth.fixations;
  int checked = 0;
  std::size_t i = 0;
  for (std::size_t k = 1; k < fx.size(); ++k) {
    if (fx[k].trial != fx[k - 1].trial) continue;
    const double amp = std::hypot(fx[k].x_px - fx[k - 1].x_px, fx[k].y_px - fx[k - 1].y_px) / ppd;
    while (i < L.size() && sr.recording.samples.time_us[i] < fx[k - 1].end_us) ++i;
    int run = 0;
    for (std::size_t j = i; j < L.size() && sr.recording.samples.time_us[j] < fx[k].start_us; ++j) run += L[j] == SampleLabel::saccade;
    EXPECT_NEAR(run, saccade_duration_ms(amp), 1.0);  // 1000 Hz: within one sample
    ++checked;
  }
  EXPECT_GT(checked, 50);
}

// Precision as RMS sample-to-sample distance within fixations
// (Holmqvist, Nystrom & Mulvey 2012, ETRA): the simulator must deliver what it is asked for.
TEST(Simulator, FixationNoiseHasTheConfiguredPrecision) {
  for (double target : {0.01, 0.05, 0.2}) {
    auto cfg = config(2, 500, 9);
    cfg.signal.noise_rms_s2s_deg = target;
    const auto st = simulate_study(cfg);
    const double ppd = VisualAngle(cfg.screen).pixels_per_degree_at_centre();
    double sum = 0;
    long n = 0;
    for (const auto& sr : st.recordings) {
      const auto& s = sr.recording.samples;
      for (std::size_t i = 1; i < s.size(); ++i) {
        if (sr.truth.labels[i] != SampleLabel::fixation || sr.truth.labels[i - 1] != SampleLabel::fixation) continue;
        if (s.time_us[i] - s.time_us[i - 1] != 2000 || !s.left.valid[i] || !s.left.valid[i - 1]) continue;
        const double dx = (s.left.x_px[i] - s.left.x_px[i - 1]) / ppd, dy = (s.left.y_px[i] - s.left.y_px[i - 1]) / ppd;
        sum += dx * dx + dy * dy;
        ++n;
      }
    }
    // Fixations are stationary but for drift, which is constant within a fixation.
    EXPECT_NEAR(std::sqrt(sum / n), target, 0.05 * target + 0.002) << target;
  }
}

// Any rate from 100 to 2000 Hz: samples one period apart (rounded to the
// microsecond), and nothing outside that range.
TEST(Simulator, AnyRateFrom100To2000Hz) {
  for (double rate : {100.0, 130.0, 300.0, 1250.0, 2000.0}) {
    const auto st = simulate_study(config(1, rate, 2, 4, 0));
    const auto& t = st.recordings[0].recording.samples.time_us;
    ASSERT_GT(t.size(), 100u);
    EXPECT_EQ(t[1] - t[0], std::llround(1e6 / rate)) << rate;
  }
  EXPECT_THROW(StudySimulator(config(1, 99, 2, 4, 0)), std::invalid_argument);
  EXPECT_THROW(StudySimulator(config(1, 2001, 2, 4, 0)), std::invalid_argument);
}

// Pupil diameter in mm: adult pupils lie within about 2-8 mm (from memory);
// lid artefacts before and after a blink shrink the tracked pupil.
TEST(Simulator, PupilIsADiameterInMillimetres) {
  const auto st = simulate_study(config(4, 250, 6, 12, 0));
  for (const auto& sr : st.recordings) {
    EXPECT_GE(sr.pupil_mean_mm, 2.5);
    EXPECT_LE(sr.pupil_mean_mm, 6.5);
    const auto& s = sr.recording.samples;
    double sum = 0;
    int n = 0;
    for (std::size_t i = 0; i < s.size(); ++i) {
      if (sr.truth.labels[i] == SampleLabel::blink) continue;
      if (!s.left.valid[i]) {
        EXPECT_TRUE(std::isnan(s.left.pupil[i]));
        continue;
      }
      EXPECT_GE(s.left.pupil[i], 2.0f);
      EXPECT_LE(s.left.pupil[i], 8.0f);
      sum += s.left.pupil[i];
      ++n;
    }
    EXPECT_NEAR(sum / n, sr.pupil_mean_mm, 0.3);
  }
}

// Passages: the bundled texts lay out to 5-12 lines at the default layout,
// every word is a region, and every fixation keeps its true line.
TEST(Passages, BundledPassagesHaveFiveToTwelveLinesAndWordRegions) {
  const TextLayoutSpec layout;
  for (const auto& p : bundled_passages()) {
    const LaidOutItem li = lay_out_item(p.id, passage_marked_text(p), layout);
    EXPECT_GE(li.line_count, 5) << p.id;
    EXPECT_LE(li.line_count, 12) << p.id;
    EXPECT_EQ(li.regions.size(), li.words.size()) << p.id;
  }
  std::set<std::string> ids;
  for (const auto& i : bundled_sentence_items()) ids.insert(i.id);
  for (const auto& p : bundled_passages()) EXPECT_TRUE(ids.insert(p.id).second) << p.id << " is also a sentence item's id";
  EXPECT_GE(bundled_sentence_items().size(), 48u);
}

TEST(Passages, EveryFixationKeepsItsTrueLineAndItsRecordedDrift) {
  auto cfg = config(2, 500, 12, 4, 3);
  cfg.passage_distortion.between_line_regression = 0.3;
  const auto st = simulate_study(cfg);
  int passage_fixations = 0, off_their_line = 0, between_line = 0;
  for (const auto& sr : st.recordings) {
    const auto& s = sr.recording.samples;
    std::size_t i = 0;
    for (std::size_t k = 0; k < sr.truth.fixations.size(); ++k) {
      const TrueFixation& f = sr.truth.fixations[k];
      const std::size_t trial = static_cast<std::size_t>(std::stoi(f.trial)) - 1;
      const TrialTruth& tt = sr.trials[trial];
      if (f.line < 0) continue;
      const LaidOutItem& li = st.stimulus(tt).layout[tt.variant];
      const PlacedChar& c = li.chars[static_cast<std::size_t>(f.char_index)];
      EXPECT_EQ(f.line, c.line);
      EXPECT_EQ(f.region, c.region);
      EXPECT_DOUBLE_EQ(f.y_px, li.line_centre_y(f.line, cfg.layout));
      EXPECT_GE(f.x_px, c.left_px - 1e-9);
      EXPECT_LE(f.x_px, c.left_px + c.width_px + 1e-9);
      if (!tt.passage) continue;
      ++passage_fixations;
      if (k > 0 && sr.truth.fixations[k - 1].line > f.line && sr.truth.fixations[k - 1].trial == f.trial) ++between_line;
      // The recorded fixation samples lie drift_y_px from the true line, within the sample noise.
      while (i < s.size() && s.time_us[i] < f.start_us) ++i;
      double sum = 0;
      int n = 0;
      for (std::size_t j = i; j < s.size() && s.time_us[j] < f.end_us; ++j) {
        if (sr.truth.labels[j] == SampleLabel::fixation && s.left.valid[j]) {
          sum += s.left.y_px[j];
          ++n;
        }
      }
      ASSERT_GT(n, 10);
      EXPECT_NEAR(sum / n - f.y_px, sr.fixation_drift_y_px[k], 1.0);
      off_their_line += std::abs(sr.fixation_drift_y_px[k]) > 0.5 * cfg.layout.line_height_px;
    }
  }
  EXPECT_GT(passage_fixations, 300);
  EXPECT_GT(between_line, 0) << "regressions to earlier lines";
  EXPECT_GT(off_their_line, 0) << "some fixations drift nearer another line";
  EXPECT_LT(off_their_line, passage_fixations / 2);
}

// The boundary paradigm's display change: logged once per sentence trial,
// while the eyes move from the last fixation before the target region to
// the first on it or beyond.
TEST(Simulator, BoundaryIsCrossedOnTheWayToTheTarget) {
  const auto st = simulate_study(config(2, 500, 14, 12, 0));
  int checked = 0;
  for (const auto& sr : st.recordings) {
    for (std::size_t k = 0; k < sr.recording.trials.size(); ++k) {
      const Trial& t = sr.recording.trials[k];
      const int target = st.stimulus(sr.trials[k]).target_region[sr.trials[k].variant];
      ASSERT_TRUE(t.markers.count("boundary"));
      const Microseconds b = t.markers.at("boundary");
      EXPECT_GT(b, t.markers.at("text_shown"));
      EXPECT_LT(b, t.markers.at("text_hidden"));
      const TrueFixation* before = nullptr;
      for (const auto& f : sr.truth.fixations) {
        if (f.trial != t.id) continue;
        if (f.region >= target) {
          ASSERT_NE(before, nullptr);
          EXPECT_GT(b, before->end_us - 1);
          EXPECT_LT(b, f.start_us);
          ++checked;
          break;
        }
        before = &f;
      }
    }
  }
  EXPECT_EQ(checked, 24);
}

TEST(Simulator, IngestReadsTheExportWithoutRepairsAndBidsMatches) {
  TempDir d;
  auto cfg = config(2, 500, 4, 12, 1);
  cfg.signal.binocular = true;
  const auto st = simulate_study(cfg);
  const std::string proto = export_study(st, d.path().string());
  const auto r1 = ingest_study(parse_protocol_file(proto), d.file("a.gzm.h5"));
  const auto r2 = ingest_study(parse_protocol_file(d.file("gazemill-bids.toml")), d.file("b.gzm.h5"));
  EXPECT_EQ(r1.repairs, 0u);
  EXPECT_EQ(r2.repairs, 0u);
  EXPECT_EQ(r1.trials, 26u);
  EXPECT_EQ(r2.trials, 26u);
  StudyStoreReader a(d.file("a.gzm.h5")), b(d.file("b.gzm.h5"));
  const Recording ra = a.read_recording("p02_1", true);
  const Recording rb = b.read_recording("p02", true);
  const Recording& truth = st.recordings[1].recording;
  ASSERT_EQ(ra.samples.size(), truth.samples.size());
  EXPECT_EQ(ra.samples.time_us, rb.samples.time_us);
  EXPECT_EQ(ra.samples.right.valid, rb.samples.right.valid);
  EXPECT_EQ(ra.samples.left.valid, truth.samples.left.valid);
  for (std::size_t i = 0; i < ra.samples.size(); i += 97) {
    if (!truth.samples.left.valid[i]) continue;
    EXPECT_NEAR(ra.samples.left.x_px[i], truth.samples.left.x_px[i], 0.0051);  // written with 2 decimals; float rounding
    EXPECT_NEAR(ra.samples.left.pupil[i], truth.samples.left.pupil[i], 0.0051);
    EXPECT_FLOAT_EQ(ra.samples.left.x_px[i], rb.samples.left.x_px[i]);
  }
  ASSERT_EQ(ra.trials.size(), truth.trials.size());
  for (std::size_t k = 0; k < ra.trials.size(); ++k) {
    EXPECT_EQ(ra.trials[k].start_us, truth.trials[k].start_us);
    EXPECT_EQ(ra.trials[k].end_us, truth.trials[k].end_us);
    EXPECT_EQ(ra.trials[k].variables, truth.trials[k].variables) << k;
    EXPECT_EQ(rb.trials[k].variables, truth.trials[k].variables) << k;
    EXPECT_EQ(ra.trials[k].markers, truth.trials[k].markers) << k;
    EXPECT_EQ(rb.trials[k].markers.at("text_shown"), truth.trials[k].markers.at("text_shown"));
  }
}

// Our conventions in the files: an empty field for a missing value, pupil in
// mm, lines, regions and characters counted from 1 with an empty field for
// none; the region files name the design's text factor and nothing else.
TEST(Simulator, ExportWritesEmptyFieldsAndCountsFromOne) {
  TempDir d;
  const auto st = simulate_study(config(1, 250, 8, 4, 1));
  const std::string proto = export_study(st, d.path().string());
  const std::string raw = read_gz(d.path() / "raw" / "p01_s1.tsv.gz");
  EXPECT_EQ(raw.rfind("time_us\tgaze_x\tgaze_y\tpupil\tmessage\n", 0), 0u);
  EXPECT_EQ(raw.find("\t.\t"), std::string::npos);
  EXPECT_EQ(raw.find("n/a"), std::string::npos);
  const auto& rec = st.recordings[0].recording;
  std::size_t lost = 0;
  while (rec.samples.left.valid[lost]) ++lost;
  EXPECT_NE(raw.find("\n" + std::to_string(rec.samples.time_us[lost]) + "\t\t\t\t\n"), std::string::npos) << "a lost sample: all fields empty";

  TsvTable fixations(d.file("truth/fixations.tsv"));
  const auto& truth = st.recordings[0].truth.fixations;
  ASSERT_EQ(fixations.rows(), truth.size());
  for (std::size_t r = 0; r < fixations.rows(); ++r) {
    if (truth[r].line < 0) {
      EXPECT_EQ(fixations.text(r, "line"), "");
      EXPECT_EQ(fixations.text(r, "region"), "");
      EXPECT_EQ(fixations.text(r, "char"), "");
    } else {
      EXPECT_EQ(fixations.text(r, "line"), std::to_string(truth[r].line + 1));
      EXPECT_EQ(fixations.text(r, "region"), std::to_string(truth[r].region + 1));
      EXPECT_EQ(fixations.text(r, "char"), std::to_string(truth[r].char_index + 1));
    }
  }
  TsvTable trials(d.file("truth/trials.tsv"));
  ASSERT_EQ(trials.rows(), 5u);
  for (std::size_t r = 0; r < trials.rows(); ++r) {
    const bool passage = trials.text(r, "block") == "passage";
    EXPECT_EQ(trials.text(r, "target_region").empty(), passage);
    EXPECT_EQ(trials.text(r, "frequency").empty(), passage);
    if (!passage) {
      // The target of the bundled items is their 3rd or a later region.
      EXPECT_GE(trials.whole(r, "target_region", 1, 100), 2);
    }
  }
  TsvTable items(d.file("items.tsv"));
  EXPECT_EQ(items.columns(), (std::vector<std::string>{"item", "frequency", "text", "roles"}));
  EXPECT_EQ(items.rows(), 4u * 2 + 1);  // each item in both texts, the passage once
  EXPECT_EQ(items.text(items.rows() - 1, "frequency"), "");
  const std::string protocol = read_file(proto);
  EXPECT_NE(protocol.find("missing_values = [\"\", \".\"]"), std::string::npos) << "a '.' still reads as missing";
  EXPECT_NE(protocol.find("factors = [\"frequency\", \"preview\"]"), std::string::npos);
}

// The regions the protocol names are found for every trial, passages (no
// factor levels) included, from the items file and from the boxes file alike.
TEST(Simulator, EveryTrialFindsItsRegions) {
  TempDir d;
  const auto st = simulate_study(config(4, 250, 10, 8, 2));
  Protocol p = parse_protocol_file(export_study(st, d.path().string()));
  const RegionCatalogue from_text = load_regions(p);
  p.regions.boxes_file = "regions.tsv";
  const RegionCatalogue from_boxes = load_regions(p);
  for (const auto& sr : st.recordings) {
    for (std::size_t k = 0; k < sr.recording.trials.size(); ++k) {
      const Trial& t = sr.recording.trials[k];
      for (const RegionCatalogue* cat : {&from_text, &from_boxes}) {
        const RegionLayout* layout = cat->find(t.variable("item"), t.variables);
        ASSERT_NE(layout, nullptr) << cat->describe(t.variable("item"), t.variables);
        EXPECT_EQ(layout->regions.size(), st.stimulus(sr.trials[k]).layout[sr.trials[k].variant].regions.size());
      }
    }
  }
}

// Streaming one participant at a time writes exactly what the in-memory
// study writes, whatever the number of threads.
TEST(Simulator, StreamingWritesTheSameFilesAsTheWholeStudy) {
  TempDir d;
  const auto cfg = config(3, 250, 21, 4, 1);
  export_study(simulate_study(cfg), d.file("whole"));
  const ExportSummary one = simulate_to_folder(cfg, d.file("one"), {}, 1);
  const ExportSummary two = simulate_to_folder(cfg, d.file("two"), {}, 2);
  EXPECT_EQ(one.participants, 3u);
  EXPECT_EQ(one.trials, 15u);
  EXPECT_EQ(one.samples, two.samples);
  std::size_t files = 0;
  for (const auto& e : fs::recursive_directory_iterator(d.file("whole"))) {
    if (!e.is_regular_file()) continue;
    const auto rel = fs::relative(e.path(), d.file("whole"));
    const bool gz = e.path().extension() == ".gz";
    const std::string a = gz ? read_gz(e.path()) : read_file(e.path());
    for (const char* other : {"one", "two"}) {
      const fs::path o = fs::path(d.file(other)) / rel;
      ASSERT_TRUE(fs::exists(o)) << o;
      EXPECT_EQ(a, gz ? read_gz(o) : read_file(o)) << rel;
    }
    ++files;
  }
  EXPECT_GT(files, 15u);
}

TEST(Simulator, CheckedInFixtureIngestsCleanly) {
  TempDir d;
  const Protocol p = parse_protocol_file(std::string(GAZEMILL_FIXTURES) + "/demo-study/gazemill.toml");
  EXPECT_EQ(p.design.factors, (std::vector<std::string>{"frequency", "preview"}));
  const auto r = ingest_study(p, d.file("f.gzm.h5"));
  EXPECT_EQ(r.recordings, 4u);
  EXPECT_EQ(r.trials, 56u);  // 4 participants x (12 sentence items + 2 passages)
  EXPECT_EQ(r.repairs, 0u);
}

// The command: defaults shown in its help, any rate from 100 to 2000 Hz, and
// choices the bundled texts cannot meet refused as usage errors before
// anything is written.
TEST(SimulateCommand, DefaultsInHelpAndImpossibleChoicesAreUsageErrors) {
  TempDir d;
  auto parse = [&](std::vector<std::string> args) {
    CLI::App app;
    SimulateOptions o;
    register_simulate_command(app, o);
    args.insert(args.begin(), {"simulate", "-o", d.file("out")});
    std::reverse(args.begin(), args.end());  // CLI11 takes a vector in reverse order
    app.parse(args);
    return o;
  };
  {
    CLI::App app;
    SimulateOptions o;
    register_simulate_command(app, o);
    const std::string help = app.get_subcommand("simulate")->help();
    for (const char* shown : {"=1000", "=24", "=4", "=0.03", "=40", "=80"}) EXPECT_NE(help.find(shown), std::string::npos) << shown;
  }
  EXPECT_EQ(parse({"--rate", "333", "--items", "8", "--passages", "1"}).rate_hz, 333.0);
  for (const auto& bad : std::vector<std::vector<std::string>>{{"--rate", "99"},
                                                               {"--rate", "2001"},
                                                               {"--items", "10"},
                                                               {"--items", "124"},
                                                               {"--passages", "13"},
                                                               {"--passages", "12", "--line-height-px", "80", "--wrap-chars", "50"}}) {
    EXPECT_THROW(parse(bad), CLI::ParseError) << bad[0] << " " << bad[1];
  }
  EXPECT_FALSE(fs::exists(d.file("out")));
  SimulateOptions o = parse({"--participants", "2", "--items", "4", "--passages", "1", "--rate", "150", "--no-bids"});
  EXPECT_EQ(run_simulate(o), 0);
  TsvTable trials(d.file("out/truth/trials.tsv"));
  EXPECT_EQ(trials.rows(), 10u);  // 2 participants x (4 items + 1 passage)
  EXPECT_FALSE(fs::exists(d.file("out/bids")));
}
