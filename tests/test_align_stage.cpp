// The align stage in the pipeline: drift correction puts fixations on their
// true lines where nearest-line assignment fails, the measures change where
// it did, and nothing changes where there was nothing to correct. The truth
// is the simulator's (truth/fixations.tsv: the line each fixation was aimed
// at); that methods other than attach survive vertical offsets of half a
// line and more is the finding of Carr, Pescuma, Furlan, Ktori & Crepaldi
// (2022, Behavior Research Methods 54(1), 287-310, section "Results",
// from memory).

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>

#include "app/line_score.h"
#include "app/protocol_parser.h"
#include "app/study_run.h"
#include "io/alignment_io.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"
#include "sim/study_export.h"
#include "sim/study_simulator.h"
#include "test_support.h"

using namespace gazemill;
using namespace gazemill::test_support;
namespace fs = std::filesystem;

namespace {

// Four readers, a few sentences and many passages; passage offsets up to 0.7
// of a line, where nearest-line assignment must fail on many fixations.
std::string drifted_study(const TempDir& d, double offset_lines) {
  sim::SimulationConfig c;
  c.design = sim::demo_design(8, 6);
  c.design.participants = 4;
  c.signal.sample_rate_hz = 250;
  c.passage_distortion.offset_lines = offset_lines;
  c.seed = 31;
  sim::ExportOptions eo;
  eo.bids = false;
  return sim::simulate_to_folder(c, (d.path() / "study").string(), eo).protocol;
}

double share(const LineScore& s, const std::string& group) {
  const auto& c = s.right_of.at(group);
  return static_cast<double>(c.first) / static_cast<double>(c.second);
}

}  // namespace

TEST(AlignStage, TheDefaultFindsTheTrueLinesWhereTheNearestLineFails) {
  TempDir d;
  drifted_study(d, 0.7);
  const auto scores = score_lines(d.file("study"), "", {"attach", "majority"});
  ASSERT_EQ(scores.size(), 2u);
  const double attach = share(scores[0], "passage"), majority = share(scores[1], "passage");
  EXPECT_LT(attach, 0.9) << "the drift should defeat nearest-line assignment";
  EXPECT_GT(majority, 0.97);
  EXPECT_GT(majority, attach + 0.05);
  // One-line sentences: nothing to correct, the same lines as attach (both all right).
  EXPECT_EQ(scores[0].right_of.at("sentence"), scores[1].right_of.at("sentence"));
}

// Measures follow the corrected lines: with drift, attach and the default
// give different passage measures; sentences (one line, little drift) keep theirs.
TEST(AlignStage, MeasuresChangeWhereDriftWasCorrected) {
  TempDir d;
  const std::string proto = drifted_study(d, 0.7);
  auto run_with = [&](const std::string& method, const std::string& out) {
    std::string text;
    {
      std::ifstream in(proto);
      text.assign(std::istreambuf_iterator<char>(in), {});
    }
    StudyRunOptions o;
    o.store_path = d.file(out + ".gzm.h5");
    return run_study(parse_protocol_text(text + "\n[alignment]\nmethod = \"" + method + "\"\n", proto), o).rows;
  };
  const auto attach = run_with("attach", "a");
  const auto majority = run_with("majority", "m");
  ASSERT_EQ(attach.size(), majority.size());
  std::size_t passage_changed = 0, sentence_changed = 0;
  for (std::size_t i = 0; i < attach.size(); ++i) {
    const bool changed = attach[i].total_time_ms != majority[i].total_time_ms;
    (attach[i].variables->at("block") == "passage" ? passage_changed : sentence_changed) += changed;
  }
  EXPECT_GT(passage_changed, 20u);
  EXPECT_EQ(sentence_changed, 0u);
}

// A person's decisions on flagged trials are data: the review file is
// applied on every run, recorded with the trial, and a change to it redoes
// alignment onward (our design; common practice of hand correction made
// reproducible, no source).
TEST(AlignStage, AReviewFileOverridesTrialsReproducibly) {
  TempDir d;
  const std::string proto = drifted_study(d, 0.7);
  std::string text;
  {
    std::ifstream in(proto);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  // The first reader's first two passage trials and a sentence.
  d.write("study/review.tsv",
          "participant\ttrial\tdecision\tvalue\treason\treviewer\n"
          "p01\t9\tmethod\twarp\tthe lines are read in order\tA.B.\n"
          "p01\t1\texclude\t\tthe reader looked away\tA.B.\n"
          "p01\t10\tshift_lines\t1\tcalibration off by a line\t\n");
  std::ofstream(proto) << text << "\n[alignment]\nreview_file = \"review.tsv\"\n";
  StudyRunOptions o;
  o.store_path = d.file("s.gzm.h5");
  const auto first = run_study(parse_protocol_file(proto), o);
  StudyStoreReader store(o.store_path);
  const auto alignment = read_alignment(store);
  const auto& p01 = alignment.front();
  ASSERT_EQ(p01.recording, "p01_1");
  auto trial = [&](const std::string& id) {
    return *std::find_if(p01.trials.begin(), p01.trials.end(), [&](const AlignedTrial& t) { return t.trial == id; });
  };
  EXPECT_EQ(trial("9").method, "warp");
  EXPECT_NE(trial("9").review.find("the lines are read in order"), std::string::npos);
  EXPECT_FALSE(trial("9").flagged);
  EXPECT_TRUE(trial("1").excluded);
  for (const auto& r : first.rows) EXPECT_FALSE(r.participant == "p01" && r.trial == "1") << "an excluded trial was measured";
  // One line down: every fixation of trial 10 on a line is one line further than before (or off the text).
  EXPECT_NE(trial("10").review.find("shift_lines 1"), std::string::npos);
  // Unchanged, nothing is redone; a changed review redoes alignment and measures only.
  EXPECT_EQ(run_study(parse_protocol_file(proto), o).stages.at(Stage::align), "reused");
  d.write("study/review.tsv", "participant\ttrial\tdecision\tvalue\treason\np01\t9\taccept\t\tlooked fine\n");
  const auto again = run_study(parse_protocol_file(proto), o);
  EXPECT_EQ(again.stages.at(Stage::clean), "reused");
  EXPECT_EQ(again.stages.at(Stage::align), "ran");
}

// Found in a newcomer's trial: where trial numbers start again in each
// session, a review row for "p01, trial 3" excluded trial 3 of both
// sessions, and a session column was ignored, with exit 0. A row names its
// session where the trial number alone is ambiguous, and must (our design, no source).
TEST(AlignStage, AReviewRowIsForOneSession) {
  TempDir d;
  const std::string proto = drifted_study(d, 0.3);
  // p02's recording as p01's second session: the same trial numbers as p01's first.
  fs::rename(d.file("study/raw/p02_s1.tsv.gz"), d.file("study/raw/p01_s2.tsv.gz"));
  std::string text;
  {
    std::ifstream in(proto);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  std::ofstream(proto) << text << "\n[alignment]\nreview_file = \"review.tsv\"\n";
  StudyRunOptions o;
  o.store_path = d.file("s.gzm.h5");
  auto error_of = [&](const std::string& table) {
    d.write("study/review.tsv", table);
    try {
      run_study(parse_protocol_file(proto), o);
    } catch (const InputError& e) {
      return std::make_pair(e.where().line, std::string(e.what()));
    }
    return std::make_pair(std::size_t{0}, std::string());
  };
  const auto ambiguous = error_of("participant\ttrial\tdecision\tvalue\treason\np01\t3\texclude\t\tbad calibration\n");
  EXPECT_EQ(ambiguous.first, 2u);
  EXPECT_NE(ambiguous.second.find("has a trial 3 in sessions 1 and 2: add a session column"), std::string::npos) << ambiguous.second;
  EXPECT_FALSE(fs::exists(o.store_path)) << "nothing written";
  const auto no_session = error_of("participant\tsession\ttrial\tdecision\tvalue\treason\np01\t3\t3\texclude\t\tbad calibration\n");
  EXPECT_NE(no_session.second.find("has no session 3; its sessions are 1, 2"), std::string::npos) << no_session.second;
  const auto twice = error_of("participant\tsession\ttrial\tdecision\tvalue\treason\np01\t2\t3\texclude\t\tx\np01\t\t3\taccept\t\ty\n");
  EXPECT_NE(twice.second.find("has a trial 3 in sessions 1 and 2"), std::string::npos) << twice.second;
  // One trial named with and without its session: the same trial twice.
  const auto same = error_of("participant\tsession\ttrial\tdecision\tvalue\treason\np03\t\t3\texclude\t\tx\np03\t1\t3\taccept\t\ty\n");
  EXPECT_EQ(same.first, 3u);
  EXPECT_NE(same.second.find("participant p03, trial 3 of session 1 is reviewed twice (also on line 2)"), std::string::npos) << same.second;
  EXPECT_EQ(error_of("participant\tsession\ttrial\tdecision\tvalue\treason\np01\t2\t3\texclude\t\tbad calibration\n").first, 0u);
  const auto alignment = read_alignment(StudyStoreReader(o.store_path));
  std::size_t excluded = 0;
  for (const auto& rec : alignment) {
    for (const auto& t : rec.trials) {
      if (t.excluded) {
        ++excluded;
        EXPECT_EQ(rec.recording, "p01_2");
        EXPECT_EQ(t.trial, "3");
      }
    }
  }
  EXPECT_EQ(excluded, 1u) << "session 2's trial 3 alone";
}

TEST(AlignStage, ReviewFileErrorsNameFileLineAndField) {
  TempDir d;
  const std::string proto = drifted_study(d, 0.3);
  std::string text;
  {
    std::ifstream in(proto);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  std::ofstream(proto) << text << "\n[alignment]\nreview_file = \"review.tsv\"\n";
  auto expect = [&](const std::string& rows, std::size_t line, const std::string& field) {
    d.write("study/review.tsv", "participant\ttrial\tdecision\tvalue\treason\n" + rows);
    StudyRunOptions o;
    o.store_path = d.file("s.gzm.h5");
    try {
      run_study(parse_protocol_file(proto), o);
      FAIL() << rows;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().line, line) << e.what();
      EXPECT_EQ(e.where().field, field) << e.what();
    }
  };
  expect("p01\t999\taccept\t\tok\n", 2, "trial");        // no such trial
  expect("p1\t1\taccept\t\tok\n", 2, "participant");      // no such participant (they are p01, p02, ...)
  expect("p01\t2\tshift_lines\t1\tx\n", 2, "value");       // trial 2, a sentence, has one line: nothing to shift to
  expect("p01\t1\tmethod\twiggle\tsure\n", 2, "value");  // no such method
  expect("p01\t1\texclude\t\t\n", 2, "reason");           // a decision without its reason
  expect("p01\t1\tshift\t1\tx\n", 2, "decision");
  expect("p01\t1\taccept\t\tok\np01\t1\texclude\t\tno\n", 3, "trial");  // the same trial twice
}
