// BIDS datasets as they are really written. References: the BIDS
// specification 1.11 (v1.11.0): "Common principles > The Inheritance
// Principle" (a JSON sidecar applies to every data file at its folder level
// or below whose name has all its entities; sidecars load from the root
// down, a lower file's key replacing the same key above; at most one
// applicable file per level), "Common principles > Tabular files" (n/a for
// a missing value), "Task events" (onset and duration in seconds, onset
// from the first sample of the data file), "Physiological recordings"
// (header-less *_physio.tsv[.gz], Columns and StartTime in the sidecar,
// physio events with OnsetSource "timestamp"). The three layouts below
// reproduce those of the BIDS project's example datasets
// eyetracking_binocular, eyetracking_eeg_ds007338 and eyetracking_fmri
// (which sidecar sits at which level, their column sets and units, header-
// less physio files, byte-order marks, n/a); every number in them is
// invented here, as those examples' data files are placeholders.

#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <functional>

#include "app/protocol_parser.h"
#include "app/score.h"
#include "app/study_run.h"
#include "io/bids_sidecars.h"
#include "io/bids_writer.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"
#include "sim/study_export.h"
#include "sim/study_simulator.h"
#include "test_support.h"
#include "tests/stage_helpers.h"

using namespace gazemill;
using namespace gazemill::test_support;
namespace fs = std::filesystem;

namespace {

std::string error_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

// 100 samples at 1000 Hz from `first_ms`, on a millisecond tracker clock,
// with a stretch of n/a.
std::string samples_ms(long first_ms, double x0) {
  std::string out;
  for (int i = 0; i < 100; ++i) {
    if (i >= 40 && i < 43) out += std::to_string(first_ms + i) + "\tn/a\tn/a\tn/a\n";
    else out += std::to_string(first_ms + i) + "\t" + std::to_string(x0 + i) + "\t300.5\t4000\n";
  }
  return out;
}

const char* kScreenSection = R"(
[screen]
width_px = 1920
height_px = 1080
width_mm = 696
height_mm = 391
viewing_distance_mm = 600
)";

// A BIDS protocol taking each recording's trials from {dir}/trials.tsv (ms).
std::string table_trials_protocol() {
  return R"([input]
format = "bids"
files = ["sub-*/beh/*_physio.tsv.gz"]
)" + std::string(kScreenSection) + R"(
[trials]
from = "table"
table = "{dir}/trials.tsv"
start_column = "start"
end_column = "end"
time_unit = "ms"
)";
}

// One recording of 100 samples 1 ms apart (1000 Hz), its root sidecar stating
// `rate_hz`, and table_trials_protocol().
std::string one_recording_with_table_trials(const TempDir& d, int rate_hz) {
  d.write("dataset_description.json", R"({"Name": "t", "BIDSVersion": "1.11.0"})");
  d.write("task-read_physio.json", R"({"PhysioType": "eyetrack", "SamplingFrequency": )" + std::to_string(rate_hz) + R"(,
    "Columns": ["timestamp", "x_coordinate", "y_coordinate", "pupil_size"], "timestamp": {"Units": "ms"},
    "x_coordinate": {"Units": "pixel"}, "y_coordinate": {"Units": "pixel"}, "SampleCoordinateSystem": "gaze-on-screen"})");
  d.write("sub-01/beh/sub-01_task-read_recording-eye1_physio.json", R"({"StartTime": 0, "RecordedEye": "left"})");
  d.write_gz("sub-01/beh/sub-01_task-read_recording-eye1_physio.tsv.gz", samples_ms(1000, 100));
  const std::string text = table_trials_protocol();
  return d.write("gazemill.toml", text);
}

// eyetracking_binocular: everything shared in the root's task-FreeView_*
// sidecars; each eye's own sidecar holds StartTime, RecordedEye and its
// calibration; the task events sidecar says OnsetSource "timestamp" (onsets
// in seconds on the tracker's clock) and gives the viewing distance in
// centimetres (60).
void write_binocular(const TempDir& d) {
  d.write("dataset_description.json", R"({"Name": "binocular layout", "BIDSVersion": "1.11.0"})");
  d.write("task-FreeView_physio.json", R"({"Manufacturer": "n/a", "PhysioType": "eyetrack",
    "Columns": ["timestamp", "x_coordinate", "y_coordinate", "pupil_size"],
    "timestamp": {"Units": "ms", "Origin": "SystemStartup"}, "x_coordinate": {"Units": "pixel"},
    "y_coordinate": {"Units": "pixel"}, "pupil_size": {"Units": "a.u."},
    "SampleCoordinateSystem": "gaze-on-screen", "SamplingFrequency": 1000, "EyeTrackingMethod": "P-CR"})");
  d.write("task-FreeView_physioevents.json", R"({"Columns": ["onset", "duration", "trial_type", "blink", "message"],
    "Description": "Messages logged by the measurement device", "OnsetSource": "timestamp"})");
  d.write("task-FreeView_events.json", R"({"Columns": ["onset", "duration", "run_number", "trial_number", "image_blank_size", "image_blank_num"],
    "OnsetSource": "timestamp", "TaskName": "FreeView",
    "StimulusPresentation": {"ScreenDistance": 60, "ScreenOrigin": ["top", "left"], "ScreenRefreshRate": 120,
      "ScreenSize": [0.696, 0.391], "ScreenResolution": [1919, 1079]}})");
  for (const char* run : {"01", "02"}) {
    const std::string base = std::string("sub-01/beh/sub-01_task-FreeView_run-") + run;
    const long first = run[1] == '1' ? 1785300 : 1885300;
    d.write(base + "_events.tsv", "onset\tduration\trun_number\ttrial_number\timage_blank_size\timage_blank_num\n" +
                                      std::to_string(first / 1000) + ".310\t0.030\t" + run + "\t1\t2\t77\n" + std::to_string(first / 1000) +
                                      ".350\t0.040\t" + run + "\t2\t1\t16\n");
    for (const char* eye : {"1", "2"}) {
      d.write(base + "_recording-eye" + eye + "_physio.json",
              std::string(R"({"StartTime": 0, "CalibrationCount": 1, "RecordedEye": ")") + (eye[0] == '1' ? "left" : "right") +
                  R"(", "AverageCalibrationError": 0.29})");
      d.write_gz(base + "_recording-eye" + eye + "_physio.tsv.gz", samples_ms(first, 500));
      d.write_gz(base + "_recording-eye" + eye + "_physioevents.tsv.gz",
                 std::to_string(first + 5) + "\t20\tfixation\t0\tn/a\n" + std::to_string(first + 25) + "\t6\tsaccade\t0\tn/a\n" +
                     std::to_string(first + 40) + "\t3\tn/a\t1\tn/a\n" + std::to_string(first + 60) + "\tn/a\tn/a\t0\tDISPLAY ON\n");
    }
  }
}

std::string binocular_protocol(const std::string& trials) {
  return std::string(R"([input]
format = "bids"
files = ["sub-*/beh/*_physio.tsv.gz"]
)") + kScreenSection + trials;
}

}  // namespace

// BIDS 1.11, The Inheritance Principle: metadata at the root, the subject
// and the file's own folder; SamplingFrequency given at two levels (the
// lower wins); a sidecar of another subject at the root does not apply.
TEST(BidsInheritance, KeysComeFromEveryLevelAndTheLowerFileWins) {
  TempDir d;
  d.write("dataset_description.json", R"({"Name": "t", "BIDSVersion": "1.11.0"})");
  const std::string root = d.write("task-read_physio.json", R"({"PhysioType": "eyetrack", "SamplingFrequency": 500,
    "Columns": ["timestamp", "x_coordinate", "y_coordinate", "pupil_size"], "timestamp": {"Units": "ms"},
    "x_coordinate": {"Units": "pixel"}, "y_coordinate": {"Units": "pixel"}, "SampleCoordinateSystem": "gaze-on-screen"})");
  d.write("sub-02_task-read_physio.json", R"({"SamplingFrequency": 60})");  // sub-02's only
  const std::string subject = d.write("sub-01/sub-01_task-read_physio.json", R"({"SamplingFrequency": 1000, "RecordedEye": "left"})");
  const std::string own = d.write("sub-01/beh/sub-01_task-read_recording-eye1_physio.json", R"({"StartTime": 0})");
  const std::string data = d.write_gz("sub-01/beh/sub-01_task-read_recording-eye1_physio.tsv.gz", samples_ms(1000, 100));

  const auto files = applicable_bids_files(data, "physio", ".json");
  EXPECT_EQ(files, (std::vector<std::string>{root, subject, own}));
  const MergedSidecar m = inherited_sidecar(data, "physio");
  EXPECT_EQ(m.file_of("SamplingFrequency"), subject);
  EXPECT_EQ(m.origin.at("SamplingFrequency").overridden, std::vector<std::string>{root});
  EXPECT_EQ(m.file_of("Columns"), root);
  EXPECT_EQ(m.file_of("StartTime"), own);
  // What -v prints: each key with the file that supplied it.
  bool named = false;
  for (const auto& line : m.describe()) named = named || line == "SamplingFrequency: " + subject + " (overrides " + root + ")";
  EXPECT_TRUE(named);

  const std::string text = table_trials_protocol();
  d.write("sub-01/beh/trials.tsv", "start\tend\tsentence\n1000\t1050\ts1\n");
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  ingest_study(p, d.file("s.gzm.h5"));
  StudyStoreReader store(d.file("s.gzm.h5"));
  const Recording r = store.read_recording("01", false);
  EXPECT_EQ(r.sample_rate_hz, 1000.0);
  ASSERT_EQ(r.trials.size(), 1u);
  EXPECT_EQ(r.trials[0].variable("sentence"), "s1");
  EXPECT_EQ(r.trials[0].end_us, 1050000);
  // Every sidecar that gave a key is an input of the recording.
  std::size_t sidecars = 0;
  for (const auto& f : store.provenance().inputs) sidecars += f.path.ends_with("_physio.json");
  EXPECT_EQ(sidecars, 3u);
}

// A SamplingFrequency the timestamps contradict is named in the file that
// gave it (BIDS 1.11, The Inheritance Principle), not the lowest sidecar
// (found in a newcomer's trial: the error named a file without the key).
TEST(BidsInheritance, AContradictedRateNamesTheFileThatGaveIt) {
  TempDir d;
  const std::string proto = one_recording_with_table_trials(d, 500);  // the samples are 1 ms apart: 1000 Hz
  const std::string root = d.file("task-read_physio.json");
  d.write("sub-01/beh/trials.tsv", "start\tend\n1000\t1050\n");
  const Protocol p = parse_protocol_file(proto);
  try {
    ingest_study(p, d.file("s.gzm.h5"));
    FAIL() << "a contradicted rate was taken";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().file, root) << e.what();
    EXPECT_EQ(e.where().field, "SamplingFrequency");
    EXPECT_NE(std::string(e.what()).find("states 500 Hz"), std::string::npos) << e.what();
  }
}

// A trial table's column named "trial" gives the trials' ids when
// trial_column names none (as export --bids writes its events files); read
// as a variable as well, it gave every table two "trial" columns (found in a
// newcomer's trial). Our design, no source.
TEST(BidsInheritance, ATrialColumnGivesTheIds) {
  TempDir d;
  const std::string proto = one_recording_with_table_trials(d, 1000);
  d.write("sub-01/beh/trials.tsv", "start\tend\ttrial\tsentence\n1000\t1040\t7\ts1\n1050\t1090\t9\ts2\n");
  const Protocol p = parse_protocol_file(proto);
  ingest_study(p, d.file("s.gzm.h5"));
  const Recording r = StudyStoreReader(d.file("s.gzm.h5")).read_recording("01", false);
  ASSERT_EQ(r.trials.size(), 2u);
  EXPECT_EQ(r.trials[0].id, "7");
  EXPECT_EQ(r.trials[1].id, "9");
  EXPECT_EQ(r.trials[0].variables.count("trial"), 0u);
  EXPECT_EQ(r.trials[0].variable("sentence"), "s1");
  // A "trial" column that does not tell the trials apart (a counter per block): numbered, the column kept under another name.
  d.write("sub-01/beh/trials.tsv", "start\tend\ttrial\tsentence\n1000\t1040\t1\ts1\n1050\t1090\t1\ts2\n");
  ingest_study(p, d.file("t.gzm.h5"));
  const Recording q = StudyStoreReader(d.file("t.gzm.h5")).read_recording("01", false);
  ASSERT_EQ(q.trials.size(), 2u);
  EXPECT_EQ(q.trials[1].id, "2");
  EXPECT_EQ(q.trials[1].variable("trial_in_table"), "1");
  EXPECT_EQ(q.trials[1].variables.count("trial"), 0u);
}

// BIDS 1.11, The Inheritance Principle: no more than one applicable file per level.
TEST(BidsInheritance, TwoApplicableSidecarsAtOneLevelAreNamed) {
  TempDir d;
  d.write("dataset_description.json", R"({"Name": "t", "BIDSVersion": "1.11.0"})");
  const std::string a = d.write("task-read_physio.json", "{}");
  const std::string b = d.write("sub-01_physio.json", "{}");
  const std::string data = d.file("sub-01/beh/sub-01_task-read_recording-eye1_physio.tsv.gz");
  const std::string e = error_of([&] { applicable_bids_files(data, "physio", ".json"); });
  EXPECT_NE(e.find(a), std::string::npos) << e;
  EXPECT_NE(e.find(b), std::string::npos) << e;
  EXPECT_NE(e.find("one applicable"), std::string::npos) << e;
}

// The eyetracking_binocular layout: both eyes, two runs, trials from each
// run's events.tsv, onsets in seconds on the tracker's clock (OnsetSource
// "timestamp" in the task events sidecar), every other column a variable.
TEST(BidsExampleLayouts, BinocularTrialsFromTheRunsEventsFiles) {
  TempDir d;
  write_binocular(d);
  const std::string text = binocular_protocol(R"(
[trials]
from = "events"
trial_column = "trial_number"

[input.bids.tracker_events]
fixation = '^fixation$'
saccade = '^saccade$'
)");
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  const StudyRunReport r = ingest_study(p, d.file("s.gzm.h5"));
  EXPECT_EQ(r.recordings, 2u);
  StudyStoreReader store(d.file("s.gzm.h5"));
  ASSERT_EQ(store.recording_ids(), (std::vector<std::string>{"01_run01", "01_run02"}));
  const Recording rec = store.read_recording("01_run01", true);
  EXPECT_TRUE(rec.samples.has_left);
  EXPECT_TRUE(rec.samples.has_right);
  EXPECT_EQ(rec.samples.size(), 100u);
  EXPECT_EQ(rec.samples.left.valid[40], 0);  // n/a
  ASSERT_EQ(rec.trials.size(), 2u);
  EXPECT_EQ(rec.trials[0].id, "1");
  EXPECT_EQ(rec.trials[0].start_us, 1785310000);  // 1785.310 s
  EXPECT_EQ(rec.trials[0].end_us, 1785340000);    // + 0.030 s
  EXPECT_EQ(rec.trials[1].variable("image_blank_num"), "16");
  EXPECT_EQ(rec.trials[1].variable("run_number"), "01");
  EXPECT_EQ(rec.trials[1].variable("onset"), "");
  // The tracker's own events, kept beside: a fixation and a saccade per eye.
  const auto tracker = store.read_tracker_events("01_run01");
  ASSERT_EQ(tracker.size(), 4u);
  EXPECT_EQ(tracker[0].kind, SampleLabel::fixation);
  EXPECT_EQ(tracker[0].start_us, 1785305000);
  EXPECT_EQ(tracker[0].end_us, 1785325000);

  // gazemill score --store: the tracker's events as the reference for gazemill's detection.
  detect_study(p, d.file("s.gzm.h5"));
  const AgreementReport agreement = score_tracker_events(d.file("s.gzm.h5"));
  // Per run and trial, the detection's eye: trial 1 (5..35 ms of the run) holds
  // the fixation and the saccade; trial 2 (50..90 ms) none. Two runs.
  EXPECT_EQ(agreement.of(SampleLabel::fixation).reference_events, 2u);
  EXPECT_EQ(agreement.of(SampleLabel::saccade).reference_events, 2u);
}

// Found in a newcomer's trial: two runs of one participant and session that
// number their trials alike (as this layout's do: 1 and 2 in each run) gave
// tables whose rows the participant, session and trial could not tell apart,
// so a model of them pooled two trials into one, with exit 0. The run stops
// before anything is written; read with the run as the session, it goes (BIDS 1.11, "Entities": run; the pooling rule is our design).
TEST(BidsExampleLayouts, RunsThatNumberTheirTrialsAlikeAreNamed) {
  TempDir d;
  write_binocular(d);
  const std::string trials = R"(
[trials]
from = "events"
trial_column = "trial_number"
)";
  const std::string text = binocular_protocol(trials);
  StudyRunOptions o;
  o.store_path = d.file("s.gzm.h5");
  const std::string e = error_of([&] { run_study(parse_protocol_text(text, d.write("gazemill.toml", text)), o); });
  EXPECT_NE(e.find("recordings 01_run01 and 01_run02 (participant 01) both have trial 1 (and 1 more)"), std::string::npos) << e;
  EXPECT_FALSE(fs::exists(o.store_path));
  std::string by_run = text;
  by_run.insert(by_run.find("files = "), "filename_pattern = 'sub-(?<participant>[A-Za-z0-9]+)_task-[A-Za-z0-9]+(?:_run-(?<session>[A-Za-z0-9]+))?'\n");
  const StudyRunReport r = run_study(parse_protocol_text(by_run, d.write("gazemill.toml", by_run)), o);
  EXPECT_EQ(r.stages.at(Stage::clean), "ran");
}

// Without [screen], the sidecar's viewing distance of 60 "m" is named.
TEST(BidsExampleLayouts, BinocularScreenInCentimetresIsNamed) {
  TempDir d;
  write_binocular(d);
  const std::string text = R"([input]
format = "bids"
files = ["sub-*/beh/*_physio.tsv.gz"]
[trials]
from = "events"
)";
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  const std::string e = error_of([&] { ingest_study(p, d.file("s.gzm.h5")); });
  EXPECT_NE(e.find("task-FreeView_events.json"), std::string::npos) << e;
  EXPECT_NE(e.find("ScreenDistance"), std::string::npos) << e;
  EXPECT_FALSE(fs::exists(d.file("s.gzm.h5")));
}

// Names the protocol relies on are checked in every events file's header
// before any work: a design factor that is no column.
TEST(BidsExampleLayouts, AFactorThatIsNoEventsColumnIsFoundBeforeAnyWork) {
  TempDir d;
  write_binocular(d);
  const std::string text = binocular_protocol(R"(
[trials]
from = "events"

[design]
factors = ["image_blank_size", "contrast"]
)");
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  const std::string e = error_of([&] { ingest_study(p, d.file("s.gzm.h5")); });
  EXPECT_NE(e.find("sub-01_task-FreeView_run-01_events.tsv:1"), std::string::npos) << e;
  EXPECT_NE(e.find("'contrast'"), std::string::npos) << e;
  EXPECT_NE(e.find("the columns are onset, duration, run_number"), std::string::npos) << e;
  EXPECT_FALSE(fs::exists(d.file("s.gzm.h5")));
}

// The eyetracking_eeg_ds007338 layout: everything in the run's own
// sidecars beside the data; the dataset's own column names (time in s,
// L-GAZE-X ...) with gaze Units "a.u"; an uncompressed header-less physio
// file starting with a byte-order mark and zeros for lost gaze; impulse
// events (duration 0) in events.tsv, so each trial lasts until the next;
// the tracker's fixation, saccade and blink rows in the physio events.
TEST(BidsExampleLayouts, EegLayoutWithItsOwnColumnNamesAndImpulseEvents) {
  TempDir d;
  d.write("dataset_description.json", R"({"Name": "eeg layout", "BIDSVersion": "1.11.0", "DatasetType": "raw"})");
  const std::string dir = "sub-EP10/ses-01/eeg/sub-EP10_ses-01_task-dots_run-01";
  d.write(dir + "_recording-eye1_physio.json", R"({"SamplingFrequency": 500.0, "StartTime": 0.0,
    "Columns": ["time", "L-GAZE-X", "L-GAZE-Y", "L-AREA"], "PhysioType": "eyetrack", "RecordedEye": "left",
    "SampleCoordinateSystem": "gaze-on-screen", "L-GAZE-X": {"Units": "a.u"}, "L-GAZE-Y": {"Units": "a.u"},
    "L-AREA": {"Units": "a.u"}, "time": {"Units": "s"}})");
  std::string physio = "\xEF\xBB\xBF";
  for (int i = 0; i < 500; ++i) {
    char row[96];
    if (i < 20) std::snprintf(row, sizeof row, "%.3f\t0.000\t0.000\t0.000\n", i * 0.002);
    else std::snprintf(row, sizeof row, "%.3f\t%.3f\t292.600\t3603.000\n", i * 0.002, 300.0 + i * 0.1);
    physio += row;
  }
  d.write(dir + "_recording-eye1_physio.tsv", physio);
  d.write(dir + "_recording-eye1_physioevents.json", R"({"Columns": ["onset", "duration", "trial_type", "value", "sample"],
    "OnsetSource": "timestamp", "onset": {"Units": "s"}})");
  d.write(dir + "_recording-eye1_physioevents.tsv", "0.244\t0.03\tsaccade\t3\t122\n0.274\t0.5\tfixation\t2\t137\n0.9\t0.098\tblink\t1\t450\n");
  d.write(dir + "_events.json", R"({"onset": {"Units": "s"}, "StimulusPresentation": {"ScreenDistance": 0.68,
    "ScreenResolution": [800, 600], "ScreenSize": [0.29, 0.18]}})");
  d.write(dir + "_events.tsv", "\xEF\xBB\xBFonset\tduration\ttrial_type\tvalue\tsample\n0.042\t0.0\t12\t4\t21\n0.088\t0.0\t1\t1\t44\n"
                               "0.506\t0.0\tend_cue\t28\t253\n0.512\t0.0\t2\t12\t256\n\n");
  const std::string text = R"([input]
format = "bids"
files = ["sub-*/ses-*/eeg/*_physio.tsv"]

[input.bids]
timestamp_column = "time"
x_column = "L-GAZE-X"
y_column = "L-GAZE-Y"
pupil_column = "L-AREA"
gaze_in_pixels = true
zero_gaze_is_missing = true

[input.bids.tracker_events]
fixation = '^fixation$'
saccade = '^saccade$'
blink = '^blink$'

[trials]
from = "events"
trial_type = '^\d+$'
span = "next"
)";
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  ingest_study(p, d.file("s.gzm.h5"));
  StudyStoreReader store(d.file("s.gzm.h5"));
  ASSERT_EQ(store.recording_ids(), std::vector<std::string>{"EP10_01_run01"});
  const Recording r = store.read_recording("EP10_01_run01", true);
  EXPECT_EQ(r.samples.size(), 500u);
  EXPECT_EQ(r.samples.time_us[0], 0);  // the byte-order mark is no part of the first time
  EXPECT_EQ(r.samples.left.valid[0], 0);  // (0, 0): lost
  EXPECT_EQ(r.samples.left.valid[20], 1);
  EXPECT_FLOAT_EQ(r.samples.left.pupil[20], 3603.0f);
  EXPECT_EQ(r.screen.width_px, 800);
  // Rows 12, 1 and 2 are trials (end_cue is not); each lasts until the next one starts.
  ASSERT_EQ(r.trials.size(), 3u);
  EXPECT_EQ(r.trials[0].start_us, 42000);
  EXPECT_EQ(r.trials[0].end_us, 87999);
  EXPECT_EQ(r.trials[1].variable("trial_type"), "1");
  EXPECT_EQ(r.trials[2].start_us, 512000);
  EXPECT_EQ(r.trials[2].end_us, 998000);  // the last sample
  const auto tracker = store.read_tracker_events("EP10_01_run01");
  ASSERT_EQ(tracker.size(), 3u);
  EXPECT_EQ(tracker[1].kind, SampleLabel::fixation);
  EXPECT_EQ(tracker[1].start_us, 274000);
  EXPECT_EQ(tracker[1].end_us, 774000);
  EXPECT_EQ(tracker[2].kind, SampleLabel::blink);
}

// The eyetracking_fmri layout: shared sidecars at the root (the physio
// events one with ForeignIndexColumn, the name of the drafts), a root
// events.tsv with a header only (and a trailing tab), StartTime in the
// file's own sidecar; trials from the tracker's messages.
TEST(BidsExampleLayouts, FmriLayoutWithAnEmptyEventsFileSegmentsByMessages) {
  TempDir d;
  d.write("dataset_description.json", R"({"Name": "fmri layout", "BIDSVersion": "1.11.0"})");
  d.write("task-rest_physio.json", R"({"PhysioType": "eyetrack", "Columns": ["timestamp", "x_coordinate", "y_coordinate", "pupil_size"],
    "timestamp": {"Units": "ms", "Origin": "System startup"}, "x_coordinate": {"Units": "pixel"}, "y_coordinate": {"Units": "pixel"},
    "pupil_size": {"Units": "a.u."}, "SampleCoordinateSystem": "gaze-on-screen", "SamplingFrequency": 1000})");
  d.write("task-rest_physioevents.json", R"({"Columns": ["onset", "duration", "trial_type", "blink", "message"],
    "ForeignIndexColumn": "timestamp"})");
  d.write("task-rest_events.json", R"({"StimulusPresentation": {"ScreenDistance": 120, "ScreenSize": [0.773, 0.445],
    "ScreenResolution": [1919, 1079]}, "TaskName": "rest"})");
  d.write("task-rest_events.tsv", "onset\tduration\t\n\n");
  for (const char* run : {"01", "02"}) {
    const std::string base = std::string("sub-01/ses-01/func/sub-01_ses-01_task-rest_run-") + run + "_recording-eye1";
    d.write(base + "_physio.json", R"({"PupilFitMethod": "CENTROID", "StartTime": 45446, "RecordedEye": "left"})");
    d.write_gz(base + "_physio.tsv.gz", samples_ms(45446, std::string(run) == "01" ? 690 : 700));  // two runs, not one file twice
    d.write_gz(base + "_physioevents.tsv.gz", "45450\tn/a\tn/a\t0\tstart rest\n45470\t12\tfixation\t0\tn/a\n45540\tn/a\tn/a\t0\tstop rest\n");
  }
  const std::string text = R"([input]
format = "bids"
files = ["sub-*/ses-*/func/*_physio.tsv.gz"]
)" + std::string(kScreenSection) + R"(
[trials]
start = '^start rest$'
end = '^stop rest$'
)";
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  ingest_study(p, d.file("s.gzm.h5"));
  StudyStoreReader store(d.file("s.gzm.h5"));
  ASSERT_EQ(store.recording_ids(), (std::vector<std::string>{"01_01_run01", "01_01_run02"}));
  const Recording r = store.read_recording("01_01_run02", true);
  EXPECT_EQ(r.samples.size(), 100u);
  EXPECT_FLOAT_EQ(r.samples.left.x_px[0], 700.0f);
  ASSERT_EQ(r.trials.size(), 1u);
  EXPECT_EQ(r.trials[0].start_us, 45450000);
  EXPECT_EQ(r.trials[0].end_us, 45540000);
  // Its empty events file read as trials says so.
  const std::string events = R"([input]
format = "bids"
files = ["sub-*/ses-*/func/*_physio.tsv.gz"]
)" + std::string(kScreenSection) + "\n[trials]\nfrom = \"events\"\n";
  const Protocol q = parse_protocol_text(events, d.write("events.toml", events));
  const std::string e = error_of([&] { ingest_study(q, d.file("t.gzm.h5")); });
  EXPECT_NE(e.find("task-rest_events.tsv"), std::string::npos) << e;
  EXPECT_NE(e.find("no trial: the table has no rows"), std::string::npos) << e;
}

// A lab's own trial table beside delimited samples ([trials] from = "table"):
// start and duration in ms on the recording's clock, every other column a
// variable (common practice, no source).
TEST(TrialTable, RowsOfALabsTableAreTrials) {
  TempDir d;
  d.write("raw/p01.tsv", "t\tx\ty\n1000\t1\t2\n1004\t1\t2\n1008\t1\t2\n1012\t1\t2\n1016\t1\t2\n");
  d.write("raw/p01_trials.csv", "trial;onset_ms;length_ms;item;cond\nA;1000;8;i1;x\nB;1008;n/a;i2;y\n");
  std::string text = R"([input]
format = "delimited"
files = ["raw/p??.tsv"]
[input.table]
time_column = "t"
time_unit = "ms"
[input.table.left]
x_column = "x"
y_column = "y"
)" + std::string(kScreenSection) + R"(
[trials]
from = "table"
table = "{dir}/{stem}_trials.csv"
delimiter = "semicolon"
trial_column = "trial"
start_column = "onset_ms"
duration_column = "length_ms"

[design]
factors = ["cond"]
)";
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  const std::string e = error_of([&] { ingest_study(p, d.file("s.gzm.h5")); });
  EXPECT_NE(e.find("p01_trials.csv:3"), std::string::npos) << e;
  EXPECT_NE(e.find("length_ms"), std::string::npos) << e;
  EXPECT_NE(e.find("span = \"next\""), std::string::npos) << e;
  d.write("raw/p01_trials.csv", "trial;onset_ms;length_ms;item;cond\nA;1000;8;i1;x\nB;1008;4;i2;y\n");
  ingest_study(p, d.file("s.gzm.h5"));
  StudyStoreReader store(d.file("s.gzm.h5"));
  const Recording r = store.read_recording("p01", false);
  ASSERT_EQ(r.trials.size(), 2u);
  EXPECT_EQ(r.trials[1].id, "B");
  EXPECT_EQ(r.trials[1].start_us, 1008000);
  EXPECT_EQ(r.trials[1].end_us, 1012000);
  EXPECT_EQ(r.trials[1].variable("cond"), "y");
}

// Two simulated readers of four sentences in d/study, as delimited files (invented data).
std::string two_readers(const TempDir& d, double rate_hz) {
  sim::SimulationConfig c;
  c.design = sim::demo_design(4, 0);
  c.design.participants = 2;
  c.signal.sample_rate_hz = rate_hz;
  c.seed = 11;
  sim::ExportOptions eo;
  eo.bids = false;
  return sim::simulate_to_folder(c, (d.path() / "study").string(), eo).protocol;
}

// Found in a newcomer's trial: participants p-01 and p01 both became
// sub-p01 (BIDS labels are letters and digits; BIDS 1.11, "Entities"), one
// subject of two runs, with exit 0. The export stops naming both.
TEST(BidsExport, TwoParticipantsOfOneLabelAreNamed) {
  TempDir d;
  const std::string proto = two_readers(d, 250);
  fs::rename(d.file("study/raw/p02_s1.tsv.gz"), d.file("study/raw/p-01_s1.tsv.gz"));
  std::string text;
  {
    std::ifstream in(proto);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  const std::string pattern = "(?<participant>p\\d+)";
  text.replace(text.find(pattern), pattern.size(), "(?<participant>p-?\\d+)");
  const Protocol p = parse_protocol_text(text, d.write("study/gazemill.toml", text));
  ingest_study(p, d.file("study/s.gzm.h5"));
  StudyStoreReader store(d.file("study/s.gzm.h5"));
  ASSERT_EQ(store.recording_ids(), (std::vector<std::string>{"p-01_1", "p01_1"}));
  const std::string e = error_of([&] { write_bids_dataset(store, d.file("shared"), "reading", "a study", "test"); });
  EXPECT_NE(e.find("participants 'p-01' and 'p01' would both be sub-p01"), std::string::npos) << e;
  EXPECT_FALSE(fs::exists(d.file("shared")));
}

// gazemill export --bids: a study's samples and detected events as a BIDS
// 1.11 eye-tracking dataset ("Physiological recordings": header-less
// physio files with Columns in sidecars; physio events with OnsetSource
// "timestamp"; dataset_description.json with BIDSVersion), whose shared
// metadata sits at the root; read back, the same samples, messages and trials.
TEST(BidsExport, AStudyRoundTripsToIdenticalSamples) {
  TempDir d;
  const std::string proto = two_readers(d, 500);
  const Protocol p = parse_protocol_file(proto);
  ingest_study(p, d.file("study/s.gzm.h5"));
  detect_study(p, d.file("study/s.gzm.h5"));
  StudyStoreReader before(d.file("study/s.gzm.h5"));
  const BidsExportSummary s = write_bids_dataset(before, d.file("shared"), "reading", "a study", "test");
  EXPECT_EQ(s.recordings, 2u);
  EXPECT_GT(s.event_rows, 0u);
  EXPECT_TRUE(fs::exists(d.file("shared/dataset_description.json")));
  EXPECT_TRUE(fs::exists(d.file("shared/task-reading_physio.json")));
  EXPECT_TRUE(fs::exists(d.file("shared/sub-p01/ses-1/beh/sub-p01_ses-1_task-reading_recording-eye1_physio.tsv.gz")));
  EXPECT_TRUE(fs::exists(d.file("shared/sub-p01/ses-1/beh/sub-p01_ses-1_task-reading_events.tsv")));
  // A second export into the same folder is refused, and leaves it as it was.
  EXPECT_NE(error_of([&] { write_bids_dataset(before, d.file("shared"), "reading", "a study", "test"); }).find("not an empty folder"),
            std::string::npos);

  std::string text;
  {
    std::ifstream in(proto);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  const std::string trials = text.substr(text.find("[trials]"), text.find("[design]") - text.find("[trials]"));
  const std::string again = R"([input]
format = "bids"
files = ["sub-*/ses-*/beh/*_physio.tsv.gz"]

[input.bids.tracker_events]
fixation = '^fixation$'
saccade = '^saccade$'
blink = '^blink$'

)" + trials;
  const Protocol q = parse_protocol_text(again, d.write("shared/gazemill.toml", again));
  ingest_study(q, d.file("back.gzm.h5"));
  StudyStoreReader after(d.file("back.gzm.h5"));
  ASSERT_EQ(after.recording_ids(), before.recording_ids());
  for (const auto& id : before.recording_ids()) {
    SCOPED_TRACE(id);
    const Recording a = before.read_recording(id, true), b = after.read_recording(id, true);
    EXPECT_EQ(a.samples.time_us, b.samples.time_us);
    EXPECT_EQ(a.samples.has_left, b.samples.has_left);
    EXPECT_EQ(a.samples.has_right, b.samples.has_right);
    for (Eye e : {Eye::left, Eye::right}) {
      const EyeSamples &x = a.samples.eye(e), &y = b.samples.eye(e);
      EXPECT_EQ(x.valid, y.valid);
      ASSERT_EQ(x.x_px.size(), y.x_px.size());
      for (std::size_t i = 0; i < x.x_px.size(); ++i) {
        if (!x.valid[i]) continue;
        ASSERT_EQ(x.x_px[i], y.x_px[i]) << i;
        ASSERT_EQ(x.y_px[i], y.y_px[i]) << i;
        ASSERT_TRUE(x.pupil[i] == y.pupil[i] || (std::isnan(x.pupil[i]) && std::isnan(y.pupil[i]))) << i;
      }
    }
    EXPECT_EQ(a.sample_rate_hz, b.sample_rate_hz);
    EXPECT_EQ(a.screen.width_px, b.screen.width_px);
    EXPECT_DOUBLE_EQ(a.screen.viewing_distance_mm, b.screen.viewing_distance_mm);
    ASSERT_EQ(a.messages.size(), b.messages.size());
    ASSERT_EQ(a.trials.size(), b.trials.size());
    for (std::size_t t = 0; t < a.trials.size(); ++t) {
      EXPECT_EQ(a.trials[t].start_us, b.trials[t].start_us);
      EXPECT_EQ(a.trials[t].variables, b.trials[t].variables);
    }
    // The detected fixations come back as the tracker's own events.
    const DetectedEvents ev = before.read_events(id);
    std::size_t fixations = 0;
    for (const auto& t : after.read_tracker_events(id)) fixations += t.kind == SampleLabel::fixation;
    EXPECT_EQ(fixations, ev.fixations.size());
  }
  // The task events read as trials give the same trials.
  const std::string from_events = R"([input]
format = "bids"
files = ["sub-*/ses-*/beh/*_physio.tsv.gz"]
[trials]
from = "events"
trial_column = "trial"
)";
  const Protocol r = parse_protocol_text(from_events, d.write("shared/events.toml", from_events));
  ingest_study(r, d.file("events.gzm.h5"));
  StudyStoreReader by_events(d.file("events.gzm.h5"));
  const Recording a = before.read_recording("p01_1", false), b = by_events.read_recording("p01_1", false);
  ASSERT_EQ(a.trials.size(), b.trials.size());
  EXPECT_EQ(a.trials.back().id, b.trials.back().id);
  EXPECT_EQ(a.trials.back().start_us, b.trials.back().start_us);
  EXPECT_EQ(a.trials.back().end_us, b.trials.back().end_us);
  EXPECT_EQ(a.trials.back().variables, b.trials.back().variables);
}

// Issue 20: gaze beyond input.offscreen_margin_px off the screen is missing
// and counted for BIDS input too, whose gaze is in pixels (common practice, no source).
TEST(BidsExampleLayouts, OffscreenGazeIsMissingAndCounted) {
  TempDir d;
  write_binocular(d);
  // The right eye of run 01 at x = 2300..2399 px, beyond 1919 + 200.
  d.write_gz("sub-01/beh/sub-01_task-FreeView_run-01_recording-eye2_physio.tsv.gz", samples_ms(1785300, 2300));
  const std::string text = binocular_protocol(R"(
[trials]
from = "events"
trial_column = "trial_number"
)");
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  const StudyRunReport r = ingest_study(p, d.file("s.gzm.h5"));
  EXPECT_EQ(r.repairs, 97u);  // 100 samples, 3 of them n/a
  StudyStoreReader store(d.file("s.gzm.h5"));
  const auto prov = store.provenance();
  ASSERT_EQ(prov.repairs.size(), 1u);
  EXPECT_EQ(prov.repairs[0].recording_id, "01_run01");
  EXPECT_EQ(prov.repairs[0].kind, "offscreen_gaze_read_as_missing");
  const Recording rec = store.read_recording("01_run01", true);
  EXPECT_EQ(rec.samples.right.valid[10], 0);
  EXPECT_EQ(rec.samples.left.valid[10], 1);
}
