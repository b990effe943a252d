// The align stage in the pipeline: drift correction puts fixations on their
// true lines where nearest-line assignment fails, the measures change where
// it did, and nothing changes where there was nothing to correct. The truth
// is the simulator's (truth/fixations.tsv: the line each fixation was aimed
// at); that methods other than attach survive vertical offsets of half a
// line and more is the finding of Carr, Pescuma, Furlan, Ktori & Crepaldi
// (2022, Behavior Research Methods 54(1), 287-310, section "Results",
// from memory).

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>

#include "app/line_score.h"
#include "app/protocol_parser.h"
#include "app/study_run.h"
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
    (attach[i].variables.at("block") == "passage" ? passage_changed : sentence_changed) += changed;
  }
  EXPECT_GT(passage_changed, 20u);
  EXPECT_EQ(sentence_changed, 0u);
}
