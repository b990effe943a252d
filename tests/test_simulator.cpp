// The simulated reading study: determinism, its text layout, and its summary
// figures against published facts about skilled silent reading.

#include <gtest/gtest.h>

#include <cmath>
#include <map>
#include <set>

#include "tests/stage_helpers.h"
#include "app/protocol_parser.h"
#include "detectors/visual_angle.h"
#include "io/study_store.h"
#include "sim/study_export.h"
#include "sim/study_simulator.h"
#include "test_support.h"

using namespace gazemill;
using namespace gazemill::sim;
using gazemill::test_support::TempDir;

namespace {

SimulationConfig config(int participants, double rate, std::uint64_t seed) {
  SimulationConfig c;
  c.design = demo_design();
  c.design.participants = participants;
  c.signal.sample_rate_hz = rate;
  c.seed = seed;
  return c;
}

// Figures of the text fixations (not the start marker) of a whole study.
struct ReadingSummary {
  double mean_fixation_ms = 0;
  double mean_forward_saccade_chars = 0;
  double regression_share = 0;   // of saccades between text fixations within a line
  double skipped_word_share = 0; // words never fixated in first pass
  std::map<std::string, double> target_first_fixation_ms;  // by condition
};

ReadingSummary summarise(const SimulatedStudy& st) {
  ReadingSummary s;
  double dur = 0, fwd = 0;
  int n_fix = 0, n_fwd = 0, n_reg = 0, n_sac = 0, words = 0, skipped = 0;
  std::map<std::string, std::pair<double, int>> target;
  for (const auto& sr : st.recordings) {
    for (const auto& trial : sr.recording.trials) {
      const std::size_t item = std::stoul(trial.variable("item")) - 1;
      const std::size_t cond = trial.variable("condition") == "rare" ? 1 : 0;
      const LaidOutItem& li = st.items[item][cond];
      std::vector<const TrueFixation*> fx;
      for (const auto& f : sr.truth.fixations) {
        if (f.trial == trial.id && f.char_index >= 0) fx.push_back(&f);
      }
      for (std::size_t k = 0; k < fx.size(); ++k) {
        dur += static_cast<double>(fx[k]->end_us - fx[k]->start_us) / 1000.0;
        ++n_fix;
        if (k == 0 || fx[k]->line != fx[k - 1]->line) continue;
        const int d = fx[k]->char_index - fx[k - 1]->char_index;
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
      const int t = st.target_regions[item][cond];
      for (const auto* f : fx) {
        if (f->region == t) {
          target[trial.variable("condition")].first += static_cast<double>(f->end_us - f->start_us) / 1000.0;
          ++target[trial.variable("condition")].second;
          break;
        }
        if (f->region > t) break;
      }
    }
  }
  s.mean_fixation_ms = dur / n_fix;
  s.mean_forward_saccade_chars = fwd / n_fwd;
  s.regression_share = static_cast<double>(n_reg) / n_sac;
  s.skipped_word_share = static_cast<double>(skipped) / words;
  for (const auto& [c, v] : target) s.target_first_fixation_ms[c] = v.first / v.second;
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
  const auto a = simulate_study(config(2, 500, 7));
  const auto b = simulate_study(config(2, 500, 7));
  const auto c = simulate_study(config(2, 500, 8));
  ASSERT_EQ(a.recordings.size(), 2u);
  // Compared as bytes: lost samples are NaN, and NaN != NaN.
  auto bytes = [](const SimulatedStudy& s) {
    const auto& x = s.recordings[1].recording.samples.left.x_px;
    return std::string(reinterpret_cast<const char*>(x.data()), x.size() * sizeof(float));
  };
  EXPECT_EQ(bytes(a), bytes(b));
  EXPECT_EQ(a.recordings[1].truth.labels, b.recordings[1].truth.labels);
  EXPECT_NE(bytes(a), bytes(c));
}

TEST(Simulator, LatinSquareGivesEveryItemEveryConditionAcrossParticipants) {
  const auto st = simulate_study(config(2, 250, 3));
  std::map<std::string, std::set<std::string>> seen;
  for (const auto& sr : st.recordings) {
    EXPECT_EQ(sr.recording.trials.size(), 12u);
    for (const auto& t : sr.recording.trials) seen[t.variable("item")].insert(t.variable("condition"));
  }
  for (const auto& [item, conds] : seen) EXPECT_EQ(conds.size(), 2u) << item;
}

// Rayner (1998, Psychological Bulletin 124(3)): in skilled silent reading the mean
// fixation lasts about 225-250 ms and saccades move about 7-9 character spaces
// forward; about 10-15 % of saccades are regressions (from memory, Rayner 1998).
// Brysbaert, Drieghe & Vitu (2005): about a third of words are skipped.
// The bands below are those figures widened to allow for our short items.
TEST(Simulator, SummaryFiguresMatchPublishedReadingFacts) {
  const ReadingSummary s = summarise(simulate_study(config(30, 250, 11)));
  EXPECT_GE(s.mean_fixation_ms, 200.0);
  EXPECT_LE(s.mean_fixation_ms, 260.0);
  EXPECT_GE(s.mean_forward_saccade_chars, 6.0);
  EXPECT_LE(s.mean_forward_saccade_chars, 10.0);
  EXPECT_GE(s.regression_share, 0.08);
  EXPECT_LE(s.regression_share, 0.18);
  EXPECT_GE(s.skipped_word_share, 0.20);
  EXPECT_LE(s.skipped_word_share, 0.45);
  // The demo's effect: first fixations on the target are longer for rare words.
  EXPECT_GT(s.target_first_fixation_ms.at("rare"), s.target_first_fixation_ms.at("frequent") + 15.0);
}

// Saccade duration follows D = 2.2 A + 21 ms (Carpenter 1988, Movements of the
// Eyes; from memory, see methods.md section 6): 25.4 ms at 2 deg, 43 ms at 10 deg.
TEST(Simulator, SaccadesFollowTheMainSequenceDuration) {
  EXPECT_NEAR(saccade_duration_ms(2.0), 25.4, 1e-9);
  EXPECT_NEAR(saccade_duration_ms(10.0), 43.0, 1e-9);
  auto cfg = config(1, 1000, 5);
  cfg.signal.blink_probability_per_saccade = 0;
  const auto st = simulate_study(cfg);
  const auto& sr = st.recordings[0];
  const VisualAngle angle(cfg.screen);
  const double ppd = angle.pixels_per_degree_at_centre();
  // Compare each saccade's labelled run of samples with the duration its amplitude implies.
  const auto& L = sr.truth.labels;
  const auto& fx = sr.truth.fixations;
  int checked = 0;
  for (std::size_t k = 1; k < fx.size(); ++k) {
    if (fx[k].trial != fx[k - 1].trial) continue;
    const double amp = std::hypot(fx[k].x_px - fx[k - 1].x_px, fx[k].y_px - fx[k - 1].y_px) / ppd;
    int run = 0;
    for (std::size_t i = 0; i < L.size(); ++i) {
      const auto t = sr.recording.samples.time_us[i];
      if (t >= fx[k - 1].end_us && t < fx[k].start_us && L[i] == SampleLabel::saccade) ++run;
    }
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
    // Fixations are stationary but for drift, which is constant within a trial.
    EXPECT_NEAR(std::sqrt(sum / n), target, 0.05 * target + 0.002) << target;
  }
}

TEST(Simulator, IngestReadsTheExportWithoutRepairsAndBidsMatches) {
  TempDir d;
  auto cfg = config(2, 500, 4);
  cfg.signal.binocular = true;
  const auto st = simulate_study(cfg);
  const std::string proto = export_study(st, d.path().string());
  const auto r1 = ingest_study(parse_protocol_file(proto), d.file("a.gzm.h5"));
  const auto r2 = ingest_study(parse_protocol_file(d.file("gazemill-bids.toml")), d.file("b.gzm.h5"));
  EXPECT_EQ(r1.repairs, 0u);
  EXPECT_EQ(r2.repairs, 0u);
  EXPECT_EQ(r1.trials, 24u);
  EXPECT_EQ(r2.trials, 24u);
  StudyStoreReader a(d.file("a.gzm.h5")), b(d.file("b.gzm.h5"));
  const Recording ra = a.read_recording("p02_1", true);
  const Recording rb = b.read_recording("p02", true);
  const Recording& truth = st.recordings[1].recording;
  ASSERT_EQ(ra.samples.size(), truth.samples.size());
  EXPECT_EQ(ra.samples.time_us, rb.samples.time_us);
  EXPECT_EQ(ra.samples.right.valid, rb.samples.right.valid);
  for (std::size_t i = 0; i < ra.samples.size(); i += 97) {
    if (!truth.samples.left.valid[i]) continue;
    EXPECT_NEAR(ra.samples.left.x_px[i], truth.samples.left.x_px[i], 0.0051);  // written with 2 decimals; float rounding
    EXPECT_FLOAT_EQ(ra.samples.left.x_px[i], rb.samples.left.x_px[i]);
  }
  ASSERT_EQ(ra.trials.size(), truth.trials.size());
  for (std::size_t k = 0; k < ra.trials.size(); ++k) {
    EXPECT_EQ(ra.trials[k].start_us, truth.trials[k].start_us);
    EXPECT_EQ(ra.trials[k].end_us, truth.trials[k].end_us);
    EXPECT_EQ(ra.trials[k].variable("item"), truth.trials[k].variable("item"));
    EXPECT_EQ(ra.trials[k].variable("condition"), truth.trials[k].variable("condition"));
    EXPECT_EQ(ra.trials[k].markers.at("text_shown"), truth.trials[k].markers.at("text_shown"));
    EXPECT_EQ(rb.trials[k].markers.at("text_shown"), truth.trials[k].markers.at("text_shown"));
  }
}

TEST(Simulator, CheckedInFixtureIngestsCleanly) {
  TempDir d;
  const Protocol p = parse_protocol_file(std::string(GAZEMILL_FIXTURES) + "/demo-study/gazemill.toml");
  const auto r = ingest_study(p, d.file("f.gzm.h5"));
  EXPECT_EQ(r.recordings, 4u);
  EXPECT_EQ(r.trials, 48u);
  EXPECT_EQ(r.repairs, 0u);
}
