// BIDS eye-tracking input. Names and fields are checked against the BIDS
// specification v1.11.0, "Modality specific files > Physiological recordings"
// (subsections "Physiology events" and "Specific physiological signal types >
// Eye-tracking"): header-less *_recording-<label>_physio.tsv.gz described by
// *_physio.json with REQUIRED SamplingFrequency, StartTime, Columns,
// PhysioType "eyetrack", RecordedEye and SampleCoordinateSystem; columns
// timestamp, x_coordinate, y_coordinate (Units REQUIRED), pupil_size;
// *_physioevents.tsv.gz with onset/duration/trial_type/message and OnsetSource;
// the screen in the task's *_events.json under StimulusPresentation.
// The first data row and the screen values are those of the specification's own example.

#include <gtest/gtest.h>

#include <filesystem>

#include "tests/stage_helpers.h"
#include "app/protocol_parser.h"
#include "io/bids_reader.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"
#include "test_support.h"

using namespace gazemill;
using gazemill::test_support::TempDir;

namespace {

std::string sidecar(const std::string& eye) {
  return R"({"SamplingFrequency": 1000, "StartTime": 0,
  "Columns": ["timestamp", "x_coordinate", "y_coordinate", "pupil_size"],
  "PhysioType": "eyetrack", "RecordedEye": ")" + eye + R"(", "SampleCoordinateSystem": "gaze-on-screen",
  "timestamp": {"Units": "ms"}, "x_coordinate": {"Units": "pixel"}, "y_coordinate": {"Units": "pixel"},
  "pupil_size": {"Description": "pupil area", "Units": "a.u."}})";
}

const char* kSamples =
    "7186799\t416.29\t267.39\t4612.0\n"
    "7186800\t416.50\t267.10\t4610.0\n"
    "7186801\tn/a\tn/a\tn/a\n"
    "7186802\t417.00\t268.00\t4605.0\n"
    "7186803\t417.20\t268.40\t4601.0\n";

const char* kEventsJson = R"({"Columns": ["onset", "duration", "trial_type", "blink", "message"],
  "OnsetSource": "timestamp", "Description": "messages"})";

const char* kEvents =
    "7186799\tn/a\tn/a\t0\tbegin trial 1\n"
    "7186800\t2\tfixation\t0\tn/a\n"
    "7186803\tn/a\tn/a\t0\tend trial 1\n";

const char* kTaskEvents = R"({"StimulusPresentation": {"ScreenDistance": 0.6, "ScreenOrigin": ["top", "left"],
  "ScreenRefreshRate": 60, "ScreenResolution": [1024, 768], "ScreenSize": [0.386, 0.29]}})";

void write_eye(const TempDir& d, const std::string& label, const std::string& eye) {
  const std::string base = "sub-07/ses-2/beh/sub-07_ses-2_task-read_recording-" + label;
  d.write_gz(base + "_physio.tsv.gz", kSamples);
  d.write(base + "_physio.json", sidecar(eye));
  d.write_gz(base + "_physioevents.tsv.gz", kEvents);
  d.write(base + "_physioevents.json", kEventsJson);
}

std::string protocol() {
  return R"([input]
format = "bids"
files = ["sub-*/ses-*/beh/*_physio.tsv.gz"]
[trials]
start = '^begin trial (?<trial>\d+)$'
end = '^end trial'
)";
}

}  // namespace

TEST(BidsReader, MonocularRecordingWithEventsAndScreen) {
  TempDir d;
  write_eye(d, "eye1", "right");
  d.write("task-read_events.json", kTaskEvents);
  d.write("dataset_description.json", R"({"Name": "t", "BIDSVersion": "1.11.0"})");
  const auto proto_path = d.write("gazemill.toml", protocol());
  const Protocol p = parse_protocol_file(proto_path);
  const auto report = ingest_study(p, d.file("s.gzm.h5"));
  EXPECT_EQ(report.samples, 5u);

  StudyStoreReader store(d.file("s.gzm.h5"));
  ASSERT_EQ(store.recording_ids(), std::vector<std::string>{"07_2"});
  const Recording r = store.read_recording("07_2", true);
  EXPECT_EQ(r.participant, "07");
  EXPECT_EQ(r.session, "2");
  EXPECT_EQ(r.sample_rate_hz, 1000.0);
  EXPECT_FALSE(r.samples.has_left);
  ASSERT_TRUE(r.samples.has_right);
  EXPECT_EQ(r.samples.time_us.front(), 7186799000);
  EXPECT_FLOAT_EQ(r.samples.right.x_px[0], 416.29f);
  EXPECT_FLOAT_EQ(r.samples.right.y_px[0], 267.39f);
  EXPECT_FLOAT_EQ(r.samples.right.pupil[0], 4612.0f);
  EXPECT_EQ(r.samples.right.valid[2], 0);
  EXPECT_EQ(r.screen.width_px, 1024);
  EXPECT_EQ(r.screen.height_px, 768);
  EXPECT_DOUBLE_EQ(r.screen.width_mm, 386.0);
  EXPECT_DOUBLE_EQ(r.screen.viewing_distance_mm, 600.0);
  ASSERT_EQ(r.messages.size(), 2u);  // rows whose message is n/a are not messages
  ASSERT_EQ(r.trials.size(), 1u);
  EXPECT_EQ(r.trials[0].start_us, 7186799000);
  EXPECT_EQ(r.trials[0].end_us, 7186803000);
  // Provenance lists the samples, both sidecars, the events file and the screen file.
  EXPECT_EQ(store.provenance().inputs.size(), 5u);
}

TEST(BidsReader, TwoEyesInTwoFilesMakeOneBinocularRecording) {
  TempDir d;
  write_eye(d, "eye1", "left");
  write_eye(d, "eye2", "right");
  auto text = protocol() + "[screen]\nwidth_px = 1024\nheight_px = 768\nwidth_mm = 386\nheight_mm = 290\nviewing_distance_mm = 600\n";
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  ingest_study(p, d.file("s.gzm.h5"));
  StudyStoreReader store(d.file("s.gzm.h5"));
  const Recording r = store.read_recording("07_2", true);
  EXPECT_TRUE(r.samples.has_left);
  EXPECT_TRUE(r.samples.has_right);
  EXPECT_FLOAT_EQ(r.samples.left.x_px[3], 417.0f);
  EXPECT_FLOAT_EQ(r.samples.right.x_px[3], 417.0f);
  EXPECT_EQ(r.messages.size(), 2u);  // the same events in both eyes' files count once
}

TEST(BidsReader, SidecarProblemsNameTheField) {
  TempDir d;
  auto expect_field = [&](const std::string& json, const std::string& field) {
    const auto path = d.write("x_physio.json", json);
    try {
      read_bids_physio_sidecar(path);
      FAIL() << "expected an error for " << field;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().field, field) << e.what();
    }
  };
  std::string s = sidecar("right");
  expect_field(std::string(s).replace(s.find("\"SamplingFrequency\": 1000, "), 27, ""), "SamplingFrequency");
  expect_field(std::string(s).replace(s.find("eyetrack"), 8, "generic"), "PhysioType");
  expect_field(std::string(s).replace(s.find("\"right\""), 7, "\"both\""), "RecordedEye");
  expect_field(std::string(s).replace(s.find("\"timestamp\": {\"Units\": \"ms\"}, "), 30, ""), "timestamp.Units");
  expect_field(std::string(s).replace(s.find("\"x_coordinate\", "), 16, ""), "Columns");
  expect_field(std::string(s).replace(s.find("1000"), 4, "0"), "SamplingFrequency");
  // Found by fuzzing: a number past a double escaped as nlohmann's out_of_range.
  expect_field(std::string(s).replace(s.find("1000"), 4, "7E777777"), "");
  // A value of the wrong JSON type is an error of the field that holds it.
  expect_field(std::string(s).replace(s.find("{\"Units\": \"ms\"}"), 15, "{\"Units\": 5}"), "timestamp.Units");
}

// The screen from StimulusPresentation is checked by hand: nlohmann's
// get<int> of a huge double is undefined behaviour.
TEST(BidsReader, ScreenOutOfRangeNamesTheField) {
  TempDir d;
  write_eye(d, "eye1", "right");
  std::string task = kTaskEvents;
  d.write("task-read_events.json", task.replace(task.find("1024"), 4, "1e300"));
  d.write("dataset_description.json", R"({"Name": "t", "BIDSVersion": "1.11.0"})");
  const Protocol p = parse_protocol_file(d.write("gazemill.toml", protocol()));
  try {
    ingest_study(p, d.file("s.gzm.h5"));
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().file, d.file("task-read_events.json"));
    EXPECT_EQ(e.where().field, "StimulusPresentation") << e.what();
  }
  EXPECT_FALSE(std::filesystem::exists(d.file("s.gzm.h5")));
  task = kTaskEvents;
  d.write("task-read_events.json", task.replace(task.find("1024"), 4, "1024.5"));
  EXPECT_THROW(ingest_study(p, d.file("s.gzm.h5")), InputError);
}
