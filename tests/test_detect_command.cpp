// detect and score from the command layer: events written to the store and
// read back, nothing else in the store disturbed, bad detection settings
// rejected by name, and scoring of a plain labelled file.

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <map>
#include <string>
#include <vector>

#include "tests/stage_helpers.h"
#include "app/protocol_parser.h"
#include "app/score.h"
#include "detectors/detector_registry.h"
#include "detectors/recording_detection.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"
#include "sim/study_export.h"
#include "sim/study_simulator.h"
#include "test_support.h"

using namespace gazemill;
using gazemill::test_support::TempDir;

namespace {

std::string copy_fixture(const TempDir& d) {
  std::filesystem::copy(std::string(GAZEMILL_FIXTURES) + "/demo-study", d.path() / "study", std::filesystem::copy_options::recursive);
  return (d.path() / "study" / "gazemill.toml").string();
}

}  // namespace

TEST(DetectCommand, WritesEventsAndKeepsTheRest) {
  TempDir d;
  std::string proto_path = copy_fixture(d);
  std::ofstream(proto_path, std::ios::app) << "\n[detection]\nmethod = \"ivt\"\neye = \"best\"\n[detection.parameters]\n"
                                              "velocity_threshold_deg_s = 20\n[detection.blinks]\npadding_before_ms = 40\n";
  const Protocol p = parse_protocol_file(proto_path);
  EXPECT_EQ(p.detection.parameters.at("velocity_threshold_deg_s"), 20.0);
  EXPECT_EQ(p.detection.blink_padding_before_ms, 40.0);
  const std::string store = d.file("s.gzm.h5");
  ingest_study(p, store);
  const Provenance before = StudyStoreReader(store).provenance();
  const auto report = detect_study(p, store);
  EXPECT_EQ(report.recordings_detected, 4u);
  EXPECT_GT(report.fixations, 500u);  // 48 trials of about 16 fixations

  StudyStoreReader r(store);
  EXPECT_EQ(r.provenance().inputs.size(), before.inputs.size());
  EXPECT_EQ(r.provenance().protocol_sha256, before.protocol_sha256);
  const auto stage = *r.stage_record(Stage::detect);
  EXPECT_NE(stage.settings_json.find("\"velocity_threshold_deg_s\":20"), std::string::npos) << stage.settings_json;
  const Recording rec = r.read_recording("p02_1", true);
  const auto detector = make_detector(p.detection);
  const auto expected = detect_recording(rec, *detector, p.detection);
  const DetectedEvents stored = r.read_events("p02_1");
  ASSERT_EQ(stored.fixations.size(), expected.events.fixations.size());
  EXPECT_EQ(stored.fixations[10].start_us, expected.events.fixations[10].start_us);
  EXPECT_DOUBLE_EQ(stored.fixations[10].x_px, expected.events.fixations[10].x_px);
  EXPECT_EQ(stored.saccades.size(), expected.events.saccades.size());
  EXPECT_EQ(stored.blinks.size(), expected.events.blinks.size());
  EXPECT_EQ(r.read_sample_labels("p02_1"), expected.labels);
  // One row per trial with the eye used; the velocity threshold is fixed,
  // and only the glissade criterion's onset threshold comes from the data.
  ASSERT_EQ(stored.trials.size(), rec.trials.size());
  for (std::size_t i = 0; i < rec.trials.size(); ++i) {
    EXPECT_EQ(stored.trials[i].trial, rec.trials[i].id);
    EXPECT_EQ(stored.trials[i].eye, expected.events.trials[i].eye);
    EXPECT_EQ(stored.trials[i].fitted, expected.events.trials[i].fitted);
    EXPECT_EQ(stored.trials[i].fitted.count("velocity_threshold_deg_s"), 0u);
    EXPECT_LE(stored.trials[i].fitted.size(), 1u);
  }

  // Running it again replaces the events rather than adding to them.
  detect_study(p, store);
  EXPECT_EQ(StudyStoreReader(store).read_events("p02_1").fixations.size(), expected.events.fixations.size());
  for (const auto& e : std::filesystem::directory_iterator(d.path())) {
    EXPECT_EQ(e.path().filename().string().find(".partial"), std::string::npos) << "left behind: " << e.path();
  }
}

// The adaptive methods set thresholds from each trial's own data; the store
// keeps them per trial, with their units, so that any trial can be redone.
TEST(DetectCommand, ThresholdsSetFromTheDataAreStoredPerTrial) {
  const std::map<std::string, std::vector<std::string>> fitted_names = {
      {"idt", {"dispersion_threshold_deg"}},
      {"engbert_kliegl", {"threshold_x_deg_s", "threshold_y_deg_s"}},
      {"nystrom_holmqvist", {"onset_threshold_deg_s", "peak_threshold_deg_s"}}};
  for (const auto& [method, names] : fitted_names) {
    TempDir d;
    std::string proto_path = copy_fixture(d);
    std::ofstream(proto_path, std::ios::app) << "\n[detection]\nmethod = \"" << method << "\"\n";
    const Protocol p = parse_protocol_file(proto_path);
    const std::string store = d.file("s.gzm.h5");
    ingest_study(p, store);
    detect_study(p, store);
    StudyStoreReader r(store);
    const Recording rec = r.read_recording("p02_1", true);
    const auto expected = detect_recording(rec, *make_detector(p.detection), p.detection);
    const DetectedEvents stored = r.read_events("p02_1");
    ASSERT_EQ(stored.trials.size(), rec.trials.size()) << method;
    for (std::size_t i = 0; i < stored.trials.size(); ++i) {
      const auto& fitted = stored.trials[i].fitted;
      ASSERT_EQ(fitted.size(), names.size()) << method << " trial " << i;
      for (const auto& name : names) {
        ASSERT_EQ(fitted.count(name), 1u) << method << " " << name;
        EXPECT_GT(fitted.at(name), 0.0) << method << " " << name;
        EXPECT_DOUBLE_EQ(fitted.at(name), expected.events.trials[i].fitted.at(name)) << method << " " << name;
      }
    }
  }
}

TEST(DetectCommand, BadDetectionSettingsNameTheKey) {
  TempDir d;
  const std::string base = "[input]\nfiles=['x']\n[input.table]\ntime_column='t'\n[input.table.left]\nx_column='x'\ny_column='y'\n"
                           "[screen]\nwidth_px=10\nheight_px=10\nwidth_mm=10\nheight_mm=10\nviewing_distance_mm=10\n"
                           "[trials]\nstart='a'\nend='b'\n";
  auto expect_error = [&](const std::string& extra, const std::string& field, const std::string& part) {
    try {
      parse_protocol_text(base + extra, "p.toml");
      FAIL() << extra;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().field, field) << e.what();
      EXPECT_NE(std::string(e.what()).find(part), std::string::npos) << e.what();
    }
  };
  expect_error("[detection]\nmethod='hmm'\n", "detection.method", "unknown detection method hmm");
  expect_error("[detection]\nmethod='idt'\n[detection.parameters]\nlambda=5\n", "detection.parameters",
               "method idt has no parameter lambda; it has: dispersion_median_factor, dispersion_threshold_deg, min_duration_ms, smoothing_window_ms");
  expect_error("[detection]\nmethod='ivt'\n[detection.parameters]\nvelocity_threshold_deg_s=-3\n", "detection.parameters", "above zero");
  // TOML allows inf; and a huge order or window once reached an unchecked cast to int.
  expect_error("[detection]\nmethod='ivt'\n[detection.parameters]\nvelocity_threshold_deg_s=inf\n", "detection.parameters", "finite");
  expect_error("[detection]\n[detection.parameters]\nsg_order=1e300\n", "detection.parameters", "from 1 to 100");
  expect_error("[detection]\nmethod='engbert_kliegl'\n[detection.parameters]\nvelocity_window_ms=1e18\n", "detection.parameters",
               "at most 1000 ms");
  expect_error("[detection]\neye='both'\n", "detection.eye", "expected \"left\", \"right\", \"best\" or \"average\"");
  expect_error("[detection]\n[detection.blinks]\nmin_ms=300\nmax_ms=100\n", "detection.blinks.max_ms", "must not be below");
  expect_error("[detection]\n[detection.events]\nmin_fixation=40\n", "detection.events.min_fixation", "unknown key");
  expect_error("[detection]\n[detection.blinks]\npadding_after_ms=inf\n", "detection.blinks.padding_after_ms", "from 0 to 60000");
}

TEST(ScoreCommand, LabelledFileAgreesWithDirectScoring) {
  // A labelled recording in a plain file, with codes of its own (1..5).
  TempDir d;
  sim::SimulationConfig c;
  c.design = sim::demo_design();
  c.design.participants = 1;
  c.signal.sample_rate_hz = 500;
  c.signal.post_saccadic_oscillation = false;
  const auto st = sim::simulate_study(c);
  const auto& sr = st.recordings[0];
  std::string text = "ms;gx;gy;code\n";
  const char* codes[] = {"1", "2", "3", "4", "5", "0"};
  for (std::size_t i = 0; i < sr.recording.samples.size(); ++i) {
    const auto& e = sr.recording.samples.left;
    text += std::to_string(static_cast<double>(sr.recording.samples.time_us[i]) / 1000.0) + ";" +
            (e.valid[i] ? std::to_string(e.x_px[i]) + ";" + std::to_string(e.y_px[i]) : std::string(";")) + ";" +
            codes[static_cast<int>(sr.truth.labels[i])] + "\n";
  }
  LabelledFileSpec f;
  f.path = d.write("labelled.csv", text);
  f.delimiter = ';';
  f.time_column = "ms";
  f.x_column = "gx";
  f.y_column = "gy";
  f.label_column = "code";
  f.codes = parse_label_codes("1=fixation,2=saccade,3=pso,4=blink,5=loss,0=other");
  f.screen = c.screen;
  DetectionSpec spec;
  spec.method = "ivt";
  spec.parameters = {{"velocity_threshold_deg_s", 20}};
  const auto from_file = score_labelled_file(f, spec);
  EXPECT_EQ(from_file.samples, sr.recording.samples.size());
  EXPECT_GT(from_file.classes[0].kappa, 0.9);
  EXPECT_GT(from_file.classes[1].kappa, 0.85);
  EXPECT_EQ(from_file.classes[3].reference_samples,
            static_cast<std::uint64_t>(std::count(sr.truth.labels.begin(), sr.truth.labels.end(), SampleLabel::blink)));
  EXPECT_THROW(parse_label_codes("1=fix"), InputError);
  // The same mapping from a small TOML file.
  EXPECT_EQ(read_label_codes_file(d.write("codes.toml", "[codes]\n\"1\" = \"fixation\"\n\"2\" = \"saccade\"\n\"3\" = \"pso\"\n"
                                                          "\"4\" = \"blink\"\n\"5\" = \"loss\"\n\"0\" = \"other\"\n")),
            f.codes);
  try {
    read_label_codes_file(d.write("bad.toml", "[codes]\n\"1\" = \"fixation\"\n\"2\" = \"sacade\"\n"));
    FAIL();
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().line, 3u);
    EXPECT_EQ(e.where().field, "codes.2");
  }
  // A label with no class counts as "other" and is listed, not rejected.
  f.codes.erase("5");
  const auto unmapped = score_labelled(f, spec);
  EXPECT_EQ(unmapped.unmapped_codes.count("5"), 1u);
  EXPECT_EQ(unmapped.report.classes[4].reference_samples, 0u);
}

TEST(ScoreCommand, SimulatedStudyFolder) {
  TempDir d;
  sim::SimulationConfig c;
  c.design = sim::demo_design();
  c.design.participants = 2;
  c.signal.sample_rate_hz = 1000;
  c.signal.post_saccadic_oscillation = false;
  const auto st = sim::simulate_study(c);
  sim::ExportOptions eo;
  eo.bids = false;
  sim::export_study(st, d.path().string(), eo);
  DetectionSpec spec;
  spec.method = "ivt";
  spec.parameters = {{"velocity_threshold_deg_s", 15}, {"sg_window_ms", 10}};
  spec.blink_padding_before_ms = spec.blink_padding_after_ms = 30;
  const auto r = score_simulated_study(d.path().string(), spec);
  // The same data scored in memory: the file round trip (2 decimals) changes little.
  const auto det = make_detector(spec);
  AgreementScorer direct;
  for (const auto& sr : st.recordings) direct.add(sr.truth.labels, detect_recording(sr.recording, *det, spec).labels, sr.recording.samples.time_us);
  EXPECT_NEAR(r.classes[0].kappa, direct.report().classes[0].kappa, 0.01);
  EXPECT_NEAR(r.classes[1].kappa, direct.report().classes[1].kappa, 0.01);
}
