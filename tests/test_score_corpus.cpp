// gazemill score on a labelled corpus: agreement pooled over files from the
// summed confusion matrix and event counts (worked by hand below), mean
// event durations, undefined figures as null in the JSON, label codes
// without a class counted and listed, and the files read with a protocol's
// [input.table] settings or the same settings as flags.

#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <iostream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "app/score.h"
#include "detectors/scoring.h"
#include "pipeline/input_error.h"
#include "test_support.h"

using namespace gazemill;
using test_support::TempDir;

namespace {

using L = SampleLabel;

std::vector<Microseconds> ms_steps(std::size_t n) {
  std::vector<Microseconds> t;
  for (std::size_t i = 0; i < n; ++i) t.push_back(static_cast<Microseconds>(i) * 1000);
  return t;
}

// Two hand-made stretches at 1 sample per ms.
//   1: reference F F F S S F F F, detected F F S S F F F F
//   2: reference F F F F S S,     detected F F F S S S
void add_both(AgreementScorer& s) {
  s.add({L::fixation, L::fixation, L::fixation, L::saccade, L::saccade, L::fixation, L::fixation, L::fixation},
        {L::fixation, L::fixation, L::saccade, L::saccade, L::fixation, L::fixation, L::fixation, L::fixation}, ms_steps(8));
  s.add({L::fixation, L::fixation, L::fixation, L::fixation, L::saccade, L::saccade},
        {L::fixation, L::fixation, L::fixation, L::saccade, L::saccade, L::saccade}, ms_steps(6));
}

}  // namespace

// Cohen (1960): kappa = (po - pe) / (1 - pe), here from the pooled 2 x 2
// table of fixation against the rest, worked by hand: over both stretches
// (14 samples) fixation/fixation 8, reference fixation only 2, detected
// fixation only 1, neither 3. po = 11/14, pe = (10 x 9 + 4 x 5) / 196 =
// 110/196, kappa = (154 - 110) / (196 - 110) = 44/86 = 0.5116. (Each
// stretch alone: 1/3 and 2/3, whose mean, 1/2, is not it: pooling sums the
// tables.) Events, a run ending one step after its last sample: reference
// fixations last 3, 3 and 4 ms (mean 10/3), detected ones 2, 4 and 3 ms
// (mean 3), so detected - reference = -1/3 ms; matched one to one by
// largest overlap, the pairs differ by -1, +1 and -1 ms: also -1/3.
// Saccades: two on each side, both matched, so precision = recall = 1.
// Post-saccadic oscillation on neither side: every figure undefined (NaN).
TEST(ScoreCorpus, PooledFromTheSummedTables) {
  AgreementScorer pooled;
  add_both(pooled);
  const AgreementReport r = pooled.report();
  EXPECT_EQ(r.samples, 14u);
  EXPECT_NEAR(r.of(L::fixation).kappa, 44.0 / 86.0, 1e-12);
  EXPECT_NEAR(r.of(L::fixation).reference_mean_duration_ms, 10.0 / 3.0, 1e-12);
  EXPECT_NEAR(r.of(L::fixation).detected_mean_duration_ms, 3.0, 1e-12);
  EXPECT_NEAR(r.of(L::fixation).mean_duration_difference_ms, -1.0 / 3.0, 1e-12);
  EXPECT_NEAR(r.of(L::fixation).matched_duration_difference_ms, -1.0 / 3.0, 1e-12);
  EXPECT_EQ(r.of(L::saccade).reference_events, 2u);
  EXPECT_EQ(r.of(L::saccade).detected_events, 2u);
  EXPECT_DOUBLE_EQ(r.of(L::saccade).precision, 1.0);
  EXPECT_DOUBLE_EQ(r.of(L::saccade).recall, 1.0);
  for (double v : {r.of(L::pso).kappa, r.of(L::pso).precision, r.of(L::pso).recall, r.of(L::pso).f1,
                   r.of(L::pso).mean_onset_difference_ms, r.of(L::pso).reference_mean_duration_ms,
                   r.of(L::pso).mean_duration_difference_ms}) {
    EXPECT_TRUE(std::isnan(v));
  }
  // Scorers kept per file and merged give the same.
  AgreementScorer one, two, merged;
  one.add({L::fixation, L::fixation, L::fixation, L::saccade, L::saccade, L::fixation, L::fixation, L::fixation},
          {L::fixation, L::fixation, L::saccade, L::saccade, L::fixation, L::fixation, L::fixation, L::fixation}, ms_steps(8));
  two.add({L::fixation, L::fixation, L::fixation, L::fixation, L::saccade, L::saccade},
          {L::fixation, L::fixation, L::fixation, L::saccade, L::saccade, L::saccade}, ms_steps(6));
  merged.merge(one);
  merged.merge(two);
  const AgreementReport m = merged.report();
  EXPECT_EQ(m.confusion, r.confusion);
  EXPECT_EQ(m.of(L::fixation).kappa, r.of(L::fixation).kappa);
  EXPECT_EQ(m.of(L::fixation).mean_duration_difference_ms, r.of(L::fixation).mean_duration_difference_ms);
}

// A class detected but never in the reference has precision 0 and no
// recall; one in the reference but never detected has recall 0 and no
// precision; F1 needs both. The JSON writes null for every undefined
// figure, and the detection settings carry the method's parameters only.
TEST(ScoreCorpus, UndefinedFiguresAreNullInJson) {
  AgreementScorer s;
  s.add({L::fixation, L::fixation, L::pso, L::pso, L::fixation, L::fixation},
        {L::fixation, L::fixation, L::fixation, L::fixation, L::blink, L::blink}, ms_steps(6));
  const AgreementReport r = s.report();
  EXPECT_TRUE(std::isnan(r.of(L::pso).precision));
  EXPECT_DOUBLE_EQ(r.of(L::pso).recall, 0.0);
  EXPECT_DOUBLE_EQ(r.of(L::blink).precision, 0.0);
  EXPECT_TRUE(std::isnan(r.of(L::blink).recall));
  DetectionSpec spec;
  spec.method = "ivt";
  const auto j = nlohmann::json::parse(agreement_json(r, spec));
  const auto& pso = j["pooled"]["classes"]["pso"];
  EXPECT_TRUE(pso["precision"].is_null());
  EXPECT_TRUE(pso["f1"].is_null());
  EXPECT_TRUE(pso["mean_onset_difference_ms"].is_null());
  EXPECT_TRUE(pso["detected_mean_duration_ms"].is_null());
  EXPECT_EQ(pso["recall"].get<double>(), 0.0);
  EXPECT_TRUE(j["pooled"]["classes"]["blink"]["recall"].is_null());
  EXPECT_TRUE(j["pooled"]["classes"]["loss"]["kappa"].is_null());
  std::set<std::string> keys;
  for (const auto& [k, v] : j["detection"]["parameters"].items()) keys.insert(k);
  EXPECT_EQ(keys, (std::set<std::string>{"velocity_threshold_deg_s", "sg_window_ms", "sg_order", "onset_sd_factor",
                                         "offset_onset_weight", "local_noise_window_ms", "max_glissade_ms", "glissades"}));
  EXPECT_EQ(j["detection"]["pso"], "separate");
  EXPECT_TRUE(j["files"].is_array() && j["files"].empty());
  EXPECT_TRUE(j["unmapped_codes"].is_object() && j["unmapped_codes"].empty());
}

namespace {

// A labelled recording at 500 Hz: 300 samples still at (512, 384), a 12-sample
// saccade to (712, 384), 300 samples still there with five lost samples
// written as "0<d>0" (or the missing token) in the middle, labelled 9, and
// three samples labelled 4 at the end. Codes: 1 fixation, 2 saccade.
std::string labelled_text(char d, const std::string& lost_x, const std::string& lost_y) {
  std::ostringstream out;
  out << "t" << d << "gx" << d << "gy" << d << "code\n";
  std::size_t i = 0;
  auto row = [&](double x, double y, const std::string& code) {
    out << (i * 2) << ".000" << d << x << d << y << d << code << "\n";
    ++i;
  };
  for (int k = 0; k < 300; ++k) row(512 + (k % 2 ? 0.3 : -0.3), 384 + (k % 3 ? 0.2 : -0.2), "1");
  for (int k = 1; k <= 12; ++k) row(512 + 200.0 * k / 12.0, 384, "2");
  for (int k = 0; k < 300; ++k) {
    if (k >= 150 && k < 155) {
      out << (i * 2) << ".000" << d << lost_x << d << lost_y << d << "9\n";
      ++i;
    } else {
      row(712 + (k % 2 ? 0.3 : -0.3), 384 + (k % 3 ? 0.2 : -0.2), k >= 297 ? "4" : "1");
    }
  }
  return out.str();
}

LabelledFileSpec settings() {
  LabelledFileSpec f;
  f.delimiter = '\t';
  f.time_column = "t";
  f.x_column = "gx";
  f.y_column = "gy";
  f.label_column = "code";
  f.codes = parse_label_codes("1=fixation,2=saccade");
  f.screen = {1024, 768, 380.0, 300.0, 670.0};
  return f;
}

}  // namespace

// Lost tracking written as (0, 0) is a jump to the screen's corner unless
// read as missing: with zero_gaze_is_missing the second fixation goes on
// across the five lost samples (10 ms, within max_fixation_gap_ms), so
// each file has two detected fixations (the reference, whose lost samples
// are coded 9, has three); read as positions, the jump there and back
// splits it. Codes 9 and 4 have no class: counted per file and pooled, as
// "other".
TEST(ScoreCorpus, ZeroCodedLossAndUnmappedCodes) {
  TempDir d;
  d.write("a.tsv", labelled_text('\t', "0", "0"));
  d.write("b.tsv", labelled_text('\t', "0", "0"));
  DetectionSpec spec;
  spec.method = "ivt";
  LabelledFileSpec f = settings();
  f.zero_gaze_is_missing = true;
  const auto files = expand_labelled_files({(d.path() / "*.tsv").string()});
  ASSERT_EQ(files.size(), 2u);
  const LabelledCorpusScore lost = score_labelled_corpus(files, f, spec);
  ASSERT_EQ(lost.files.size(), 2u);
  EXPECT_EQ(lost.files[0].report.of(L::fixation).detected_events, 2u);
  EXPECT_EQ(lost.pooled.of(L::fixation).reference_events, 6u);
  EXPECT_EQ(lost.pooled.of(L::fixation).detected_events, 4u);
  EXPECT_EQ(lost.pooled.samples, 2u * 612u);
  EXPECT_EQ(lost.files[0].unmapped_codes.at("9"), 5u);
  EXPECT_EQ(lost.files[0].unmapped_codes.at("4"), 3u);
  EXPECT_EQ(lost.unmapped_codes.at("9"), 10u);
  EXPECT_EQ(lost.unmapped_codes.at("4"), 6u);
  // Pooled: the sum of the files' tables.
  for (std::size_t a = 0; a < kLabelCount; ++a) {
    for (std::size_t b = 0; b < kLabelCount; ++b) {
      EXPECT_EQ(lost.pooled.confusion[a][b], lost.files[0].report.confusion[a][b] + lost.files[1].report.confusion[a][b]);
    }
  }
  f.zero_gaze_is_missing = false;
  const LabelledCorpusScore corner = score_labelled_corpus(files, f, spec);
  EXPECT_GT(corner.files[0].report.of(L::fixation).detected_events, 2u);

  EXPECT_THROW(expand_labelled_files({(d.path() / "*.csv").string()}), InputError);
  try {
    expand_labelled_files({(d.path() / "none.tsv").string()});
    FAIL();
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().field, "--labelled");
  }
}

// The reader takes the protocol's [input.table] settings (delimiter, time
// unit, missing values, zero_gaze_is_missing) and its screen; flags given
// on the command line override them. Here the files use ';' and write lost
// samples as "NA", which only the protocol's missing values name.
TEST(ScoreCorpus, ReadingSettingsFromTheProtocolOrFlags) {
  TempDir d;
  d.write("rec1.csv", labelled_text(';', "NA", "NA"));
  d.write("rec2.csv", labelled_text(';', "NA", "NA"));
  const std::string protocol = d.write("p.toml", R"([study]
name = "corpus"
[input]
files = ["*.csv"]
[input.table]
delimiter = "semicolon"
time_column = "t"
time_unit = "ms"
missing_values = ["NA"]
zero_gaze_is_missing = true
[input.table.left]
x_column = "gx"
y_column = "gy"
[screen]
width_px = 1024
height_px = 768
width_mm = 380
height_mm = 300
viewing_distance_mm = 670
[trials]
start = '^start$'
end = '^end$'
[detection]
method = "ivt"
pso = "fixation"
)");
  ScoreOptions o;
  o.labelled = {(d.path() / "rec*.csv").string()};
  o.protocol = protocol;
  o.columns = "t,gx,gy,code";
  o.codes = "1=fixation,2=saccade";
  o.json_out = d.file("out.json");
  std::ostringstream ignored;
  auto* old = std::cout.rdbuf(ignored.rdbuf());
  run_score(o);
  std::cout.rdbuf(old);
  std::ifstream in(o.json_out);
  const auto j = nlohmann::json::parse(in);
  EXPECT_EQ(j["files"].size(), 2u);
  EXPECT_EQ(j["pooled"]["samples"], 2 * 612);
  EXPECT_EQ(j["pooled"]["classes"]["fixation"]["detected_events"], 4);
  EXPECT_EQ(j["unmapped_codes"]["9"], 10);
  EXPECT_EQ(j["detection"]["method"], "ivt");
  EXPECT_EQ(j["detection"]["pso"], "fixation");
  // A comma given on the command line overrides the protocol's semicolon:
  // the header then has one column and the time column is not found.
  o.delimiter = "comma";
  std::cout.rdbuf(ignored.rdbuf());
  EXPECT_THROW(run_score(o), InputError);
  std::cout.rdbuf(old);
}

// A labelled file read in the wrong time unit, or with codes that match none
// of its labels, is an error, not a table of low kappas (a newcomer's trial:
// kappa 0.31 and 0.000 with exit 0). The files here have a sample every
// 2 ms: read as us, 500 000 Hz, no tracker's rate.
TEST(ScoreCorpus, AWrongTimeUnitOrCodesMatchingNoLabelAreErrors) {
  TempDir d;
  d.write("a.tsv", labelled_text('\t', "0", "0"));
  const auto files = expand_labelled_files({(d.path() / "*.tsv").string()});
  DetectionSpec spec;
  spec.method = "ivt";
  LabelledFileSpec f = settings();
  f.time_unit = TimeUnit::microseconds;
  try {
    score_labelled_corpus(files, f, spec);
    FAIL() << "microseconds passed";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().field, "t");
    EXPECT_NE(std::string(e.what()).find("500000 Hz"), std::string::npos) << e.what();
  }
  f = settings();
  f.codes = parse_label_codes("fixation=fixation,saccade=saccade");
  try {
    score_labelled_corpus(files, f, spec);
    FAIL() << "codes matching no label passed";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().field, "code");
    EXPECT_NE(std::string(e.what()).find("none of its labels is one of the codes"), std::string::npos) << e.what();
  }
}
