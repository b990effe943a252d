// Whole ingest runs from a protocol: round trip, messages from a separate
// file, repairs in the provenance, determinism, and no store after bad input.

#include <gtest/gtest.h>

#include <cmath>
#include <cstring>
#include <filesystem>

#include "tests/stage_helpers.h"
#include "app/preflight.h"
#include "app/protocol_parser.h"
#include "io/sha256.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"
#include "test_support.h"

using namespace gazemill;
using gazemill::test_support::TempDir;
namespace fs = std::filesystem;

namespace {

const char* kProtocol = R"([study]
name = "tiny"
[input]
files = ["raw/*.tsv"]
filename_pattern = '(?<participant>r\d+)-(?<session>\w+)\.tsv$'
[input.table]
time_column = "time"
time_unit = "ms"
message_column = "event"
[input.table.left]
x_column = "x"
y_column = "y"
pupil_column = "pupil"
[screen]
width_px = 1600
height_px = 900
width_mm = 480
height_mm = 270
viewing_distance_mm = 650
[trials]
start = '^start trial (?<trial>\d+)$'
end = '^stop trial (?<trial>\d+)$'
variables = ['^item (?<item>\d+) (?<condition>\w+)$']
[trials.markers]
text_on = '^text on$'
)";

std::string samples(int trials, int per_trial, bool close_last = true) {
  std::string s = "time\tx\ty\tpupil\tevent\n";
  int t = 0;
  for (int k = 1; k <= trials; ++k) {
    s += std::to_string(t) + "\t\t\t\tstart trial " + std::to_string(k) + "\n";
    s += std::to_string(t) + "\t\t\t\titem " + std::to_string(10 + k) + (k % 2 ? " rare" : " frequent") + "\n";
    s += std::to_string(t + 1) + "\t\t\t\ttext on\n";
    for (int i = 0; i < per_trial; ++i, ++t) {
      s += std::to_string(t) + "\t" + std::to_string(100 + i) + ".5\t" + std::to_string(200 + k) + "\t" +
           (i % 50 == 7 ? "" : "1500") + "\t\n";
    }
    if (close_last || k < trials) s += std::to_string(t - 1) + "\t\t\t\tstop trial " + std::to_string(k) + "\n";
  }
  return s;
}

Protocol write_study(const TempDir& d, const std::string& protocol_text = kProtocol) {
  d.write("raw/r01-a.tsv", samples(3, 200));
  d.write("raw/r02-a.tsv", samples(2, 150));
  return parse_protocol_text(protocol_text, d.write("gazemill.toml", protocol_text));
}

// Nothing but the inputs: no store, no scratch, no lock file.
void expect_no_store(const TempDir& d) {
  for (const auto& e : fs::directory_iterator(d.path())) {
    const std::string name = e.path().filename().string();
    EXPECT_TRUE(name == "raw" || name == "gazemill.toml") << "left behind: " << name;
  }
}

}  // namespace

TEST(Ingest, RoundTripFromProtocol) {
  TempDir d;
  const Protocol p = write_study(d);
  const auto report = ingest_study(p, d.file("tiny.gzm.h5"));
  EXPECT_EQ(report.recordings, 2u);
  EXPECT_EQ(report.samples, 3u * 200 + 2u * 150);
  EXPECT_EQ(report.trials, 5u);

  StudyStoreReader store(d.file("tiny.gzm.h5"));
  EXPECT_EQ(store.recording_ids(), (std::vector<std::string>{"r01_a", "r02_a"}));
  const Recording r = store.read_recording("r01_a", true);
  EXPECT_EQ(r.participant, "r01");
  EXPECT_EQ(r.session, "a");
  EXPECT_EQ(r.sample_rate_hz, 1000.0);  // from the median interval of 1 ms
  ASSERT_EQ(r.trials.size(), 3u);
  EXPECT_EQ(r.trials[1].variable("item"), "12");
  EXPECT_EQ(r.trials[1].variable("condition"), "frequent");
  EXPECT_EQ(r.trials[1].start_us, 200000);
  EXPECT_EQ(r.trials[1].end_us, 399000);
  EXPECT_EQ(r.trials[1].markers.at("text_on"), 201000);
  EXPECT_EQ(r.samples.size(), 600u);
  EXPECT_FLOAT_EQ(r.samples.left.x_px[201], 101.5f);
  EXPECT_TRUE(std::isnan(r.samples.left.pupil[7]));
  const auto prov = store.provenance();
  ASSERT_EQ(prov.inputs.size(), 2u);
  EXPECT_EQ(prov.inputs[0].sha256, sha256_file(d.file("raw/r01-a.tsv")));
  EXPECT_EQ(prov.inputs[0].size_bytes, fs::file_size(d.file("raw/r01-a.tsv")));
  EXPECT_EQ(prov.protocol_text, kProtocol);
  EXPECT_EQ(prov.protocol_sha256, sha256_hex(kProtocol));
}

TEST(Ingest, MessagesFromASeparateFile) {
  TempDir d;
  std::string text = kProtocol;
  text.replace(text.find("message_column = \"event\"\n"), 25, "");
  text.replace(text.find("[screen]"), 0,
               "[input.messages]\nfile = '{dir}/{participant}-{session}.msg'\ntime_column = 't'\ntext_column = 'what'\n");
  d.write("raw/r01-a.tsv", "time\tx\ty\tpupil\n0\t1\t2\t3\n1\t1\t2\t3\n2\t1\t2\t3\n");
  d.write("raw/r01-a.msg", "t\twhat\n0\tstart trial 1\n0\titem 5 rare\n1\ttext on\n2\tstop trial 1\n");
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  ingest_study(p, d.file("s.gzm.h5"));
  StudyStoreReader store(d.file("s.gzm.h5"));
  const Recording r = store.read_recording("r01_a", false);
  ASSERT_EQ(r.trials.size(), 1u);
  EXPECT_EQ(r.trials[0].variable("item"), "5");
  EXPECT_EQ(store.provenance().inputs.size(), 2u);  // samples and messages are both recorded
}

TEST(Ingest, DeterministicDatasets) {
  TempDir d;
  const Protocol p = write_study(d);
  ingest_study(p, d.file("a.gzm.h5"));
  StudyRunOptions one_thread;
  one_thread.store_path = d.file("b.gzm.h5");
  one_thread.only = Stage::ingest;
  one_thread.jobs = 1;
  run_study(p, one_thread);
  StudyStoreReader a(d.file("a.gzm.h5")), b(d.file("b.gzm.h5"));
  ASSERT_EQ(a.recording_ids(), b.recording_ids());
  for (const auto& id : a.recording_ids()) {
    const Recording x = a.read_recording(id, true), y = b.read_recording(id, true);
    EXPECT_EQ(x.samples.time_us, y.samples.time_us);
    EXPECT_EQ(0, std::memcmp(x.samples.left.x_px.data(), y.samples.left.x_px.data(), x.samples.left.x_px.size() * 4));
    EXPECT_EQ(0, std::memcmp(x.samples.left.pupil.data(), y.samples.left.pupil.data(), x.samples.left.pupil.size() * 4));
    EXPECT_EQ(x.samples.left.valid, y.samples.left.valid);
    ASSERT_EQ(x.trials.size(), y.trials.size());
    for (std::size_t i = 0; i < x.trials.size(); ++i) EXPECT_EQ(x.trials[i].markers, y.trials[i].markers);
  }
  EXPECT_EQ(a.provenance().inputs[1].sha256, b.provenance().inputs[1].sha256);
  // The h5py test compares every dataset byte for byte as well.
}

TEST(IngestErrors, BadFieldLeavesNoStore) {
  TempDir d;
  const Protocol p = write_study(d);
  d.write("raw/r02-a.tsv", "time\tx\ty\tpupil\tevent\n0\t1\t2\t3\t\n1\tabc\t2\t3\t\n");
  try {
    ingest_study(p, d.file("tiny.gzm.h5"));
    FAIL();
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().file, d.file("raw/r02-a.tsv"));
    EXPECT_EQ(e.where().line, 3u);
    EXPECT_EQ(e.where().field, "x");
  }
  expect_no_store(d);
}

// Times read in the wrong unit give a rate no eye tracker has; unchecked,
// every duration downstream would be off a thousandfold. Trackers sample at
// about 30 to 2000 Hz (common practice, no source); the bounds are 10 to
// 10 000 Hz.
TEST(IngestErrors, TimestampsInTheWrongUnit) {
  TempDir d;
  for (const char* unit : {"s", "us"}) {  // the 1 ms steps of the samples read as 1 s, or as 1 us
    std::string text = kProtocol;
    text.replace(text.find("time_unit = \"ms\""), 16, std::string("time_unit = \"") + unit + "\"");
    const Protocol p = write_study(d, text);
    try {
      ingest_study(p, d.file("tiny.gzm.h5"));
      FAIL() << unit;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().field, "input.table.time_unit") << e.what();
      EXPECT_NE(std::string(e.what()).find("Is " + std::string(unit) + " the unit of the time column?"), std::string::npos) << e.what();
    }
    expect_no_store(d);
  }
}

// A stated rate the timestamps contradict: detection follows the timestamps,
// the data-quality digest the stated rate, so they would disagree unseen.
// The samples here are 1 ms apart, 1000 Hz by arithmetic.
TEST(IngestErrors, StatedRateTheTimestampsContradict) {
  TempDir d;
  std::string text = kProtocol;
  text.replace(text.find("[input]\n"), 8, "[input]\nsample_rate_hz = 500\n");
  const Protocol p = write_study(d, text);
  try {
    ingest_study(p, d.file("tiny.gzm.h5"));
    FAIL() << "500 Hz stated, 1000 Hz recorded";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().field, "input.sample_rate_hz") << e.what();
    EXPECT_EQ(e.where().line, 4u) << e.what();
    EXPECT_NE(std::string(e.what()).find("which is 1000 Hz"), std::string::npos) << e.what();
  }
  expect_no_store(d);
  text.replace(text.find("sample_rate_hz = 500"), 20, "sample_rate_hz = 1000");
  EXPECT_NO_THROW(ingest_study(write_study(d, text), d.file("tiny.gzm.h5")));
}

// A pattern that drops the session gives two files one recording id.
TEST(IngestErrors, TwoFilesGiveOneRecording) {
  TempDir d;
  std::string text = kProtocol;
  text.replace(text.find("filename_pattern"), text.find('\n', text.find("filename_pattern")) - text.find("filename_pattern"),
               "filename_pattern = '(?<participant>r\\d+)'");
  d.write("raw/r01-b.tsv", samples(1, 100));
  const Protocol p = write_study(d, text);
  try {
    ingest_study(p, d.file("tiny.gzm.h5"));
    FAIL();
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().field, "input.filename_pattern");
    EXPECT_EQ(e.where().line, 5u) << "the pattern's line";
    EXPECT_NE(std::string(e.what()).find("r01-a.tsv and "), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("r01-b.tsv both give recording 'r01'"), std::string::npos) << e.what();
  }
  expect_no_store(d);
}

TEST(IngestErrors, ProtocolNamesAColumnTheFileLacks) {
  TempDir d;
  std::string text = kProtocol;
  text.replace(text.find("pupil_column = \"pupil\""), 22, "pupil_column = \"pupil_size\"");
  const Protocol p = write_study(d, text);
  try {
    ingest_study(p, d.file("tiny.gzm.h5"));
    FAIL();
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().line, 1u);
    EXPECT_EQ(e.where().field, "pupil_size");
    EXPECT_NE(std::string(e.what()).find("input.table.left.pupil_column"), std::string::npos);
  }
  expect_no_store(d);
}

TEST(IngestErrors, TrialStartWithoutEndFailsOrIsRepairedAndCounted) {
  TempDir d;
  Protocol p = write_study(d);
  d.write("raw/r02-a.tsv", samples(2, 150, /*close_last=*/false));
  EXPECT_THROW(ingest_study(p, d.file("tiny.gzm.h5")), InputError);
  expect_no_store(d);

  p.input.repairs.unterminated_trials = UnterminatedTrialPolicy::drop;
  ingest_study(p, d.file("tiny.gzm.h5"));
  StudyStoreReader store(d.file("tiny.gzm.h5"));
  EXPECT_EQ(store.read_recording("r02_a", false).trials.size(), 1u);
  const auto prov = store.provenance();
  ASSERT_EQ(prov.repairs.size(), 1u);
  EXPECT_EQ(prov.repairs[0].recording_id, "r02_a");
  EXPECT_EQ(prov.repairs[0].kind, "unterminated_trial_dropped");
  EXPECT_EQ(prov.repairs[0].count, 1u);
}

TEST(IngestErrors, PatternsThatMatchNothing) {
  TempDir d;
  const Protocol p = write_study(d);
  Protocol q = p;
  q.input.files = {"raw/*.csv"};
  EXPECT_THROW(ingest_study(q, d.file("x.gzm.h5")), InputError);
  q = p;
  q.input.filename_pattern = "^nomatch$";
  EXPECT_THROW(ingest_study(q, d.file("x.gzm.h5")), InputError);
  q = p;
  q.trials.start_pattern = "^never$";
  EXPECT_THROW(ingest_study(q, d.file("x.gzm.h5")), InputError);
  expect_no_store(d);
}

namespace {

// Samples in ms; the messages of the same trials written in us (issue 20's
// repro). Common practice, no source.
std::string messages_protocol(const std::string& extra_messages_keys, const std::string& repairs = "") {
  std::string text = kProtocol;
  text.replace(text.find("message_column = \"event\"\n"), 25, "");
  text.replace(text.find("[screen]"), 0,
               "[input.messages]\nfile = '{dir}/{participant}-{session}.msg'\ntime_column = 't'\ntext_column = 'what'\n" +
                   extra_messages_keys + (repairs.empty() ? "" : "[input.repairs]\n" + repairs));
  return text;
}

void write_messages_in_us(const TempDir& d) {
  std::string s = "time\tx\ty\tpupil\n";
  for (int t = 0; t < 300; ++t) s += std::to_string(t) + "\t100\t200\t1500\n";
  d.write("raw/r01-a.tsv", s);
  d.write("raw/r01-a.msg", "t\twhat\n0\tstart trial 1\n0\titem 5 rare\n1000\ttext on\n99000\tstop trial 1\n"
                           "100000\tstart trial 2\n100000\titem 6 frequent\n299000\tstop trial 2\n");
}

}  // namespace

TEST(Ingest, MessagesFileWithItsOwnTimeUnit) {
  TempDir d;
  write_messages_in_us(d);
  const std::string text = messages_protocol("time_unit = \"us\"\n");
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  ingest_study(p, d.file("s.gzm.h5"));
  const Recording r = StudyStoreReader(d.file("s.gzm.h5")).read_recording("r01_a", false);
  ASSERT_EQ(r.trials.size(), 2u);
  EXPECT_EQ(r.trials[1].start_us, 100000);
  EXPECT_EQ(r.trials[1].end_us, 299000);
}

// Issue 20: messages read in the wrong unit put every trial after the
// recording; ingest reported the trials and detect found 0 fixations, both
// exit 0. Now an error naming the file, the trial's first message line, the
// recording's span and the key; or, when the protocol allows, a counted repair.
TEST(IngestErrors, TrialsWithoutSamplesFailOrAreDroppedAndCounted) {
  TempDir d;
  write_messages_in_us(d);
  {
    const std::string text = messages_protocol("");
    const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
    try {
      ingest_study(p, d.file("s.gzm.h5"));
      FAIL();
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().file, d.file("raw/r01-a.msg"));
      EXPECT_EQ(e.where().line, 6u) << e.what();  // line 6 of the file above: trial 2, the first past the samples' end (299 ms)
      EXPECT_EQ(e.where().field, "trials.start");
      const std::string what = e.what();
      EXPECT_NE(what.find("trial '2' runs from 100000 ms to 299000 ms and has no samples"), std::string::npos) << what;
      EXPECT_NE(what.find("run from 0 ms to 299 ms"), std::string::npos) << what;
      EXPECT_NE(what.find("input.messages.time_unit"), std::string::npos) << what;
      EXPECT_NE(what.find("input.repairs.trials_without_samples = \"drop\""), std::string::npos) << what;
    }
    expect_no_store(d);
  }
  const std::string text = messages_protocol("", "trials_without_samples = \"drop\"\n");
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  const auto report = ingest_study(p, d.file("s.gzm.h5"));
  EXPECT_EQ(report.trials, 1u);
  EXPECT_EQ(report.repairs, 1u);
  StudyStoreReader store(d.file("s.gzm.h5"));
  EXPECT_EQ(store.read_recording("r01_a", false).trials.size(), 1u);
  const auto prov = store.provenance();
  ASSERT_EQ(prov.repairs.size(), 1u);
  EXPECT_EQ(prov.repairs[0].kind, "trial_without_samples_dropped");
  EXPECT_EQ(prov.repairs[0].count, 1u);
}

// Issue 20: x = 1560 on a 1024 px screen was accepted without a note. Gaze
// beyond input.offscreen_margin_px off the screen is missing and counted
// (common practice, no source; the default's argument is in pipeline/protocol.h).
TEST(Ingest, OffscreenGazeIsMissingAndCounted) {
  TempDir d;
  Protocol p = write_study(d);
  std::string s = samples(1, 200);
  const std::string row = "\n5\t105.5\t201\t";
  s.replace(s.find(row), row.size(), "\n5\t1900.5\t201\t");  // 300 px right of the 1600 px screen
  d.write("raw/r01-a.tsv", s);
  auto report = ingest_study(p, d.file("a.gzm.h5"));
  EXPECT_EQ(report.repairs, 1u);
  {
    StudyStoreReader store(d.file("a.gzm.h5"));
    const auto prov = store.provenance();
    ASSERT_EQ(prov.repairs.size(), 1u);
    EXPECT_EQ(prov.repairs[0].kind, "offscreen_gaze_read_as_missing");
    EXPECT_EQ(store.read_recording("r01_a", true).samples.left.valid[5], 0);
  }
  p.input.offscreen_margin_px = 400;
  report = ingest_study(p, d.file("b.gzm.h5"));
  EXPECT_EQ(report.repairs, 0u);
}

// Issue 20 (a status column): a column the protocol names is looked for in
// every sample file's header before any recording is read, so a mistake in
// the last file is not found after the others' work (common practice, no source).
TEST(IngestErrors, StatusColumnIsCheckedInEveryHeaderBeforeWork) {
  TempDir d;
  Protocol p = write_study(d);
  p.input.table.status_column = "pupil";
  p.input.table.invalid_status = {"1500"};
  d.write("raw/r01-a.tsv", samples(3, 200) + "nonsense\trow\n");  // read first, would fail on its last line
  std::string s = samples(2, 150);
  s.replace(0, s.find('\n'), "time\tx\ty\tpupil_size\tevent");
  d.write("raw/r02-a.tsv", s);
  try {
    ingest_study(p, d.file("tiny.gzm.h5"));
    FAIL();
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().file, d.file("raw/r02-a.tsv"));
    EXPECT_EQ(e.where().line, 1u);
    EXPECT_EQ(e.where().field, "pupil");
    EXPECT_NE(std::string(e.what()).find("input.table.status_column is not in the header"), std::string::npos) << e.what();
  }
  expect_no_store(d);
}

// Preflight (issue 20: a read-only or missing output folder was found only
// after the whole ingest, behind pages of HDF5 diagnostics). As root no
// permission bits stop a write, so the unwritable folder is /proc, which no
// one may create files in (common practice, no source).
TEST(IngestErrors, OutputFolderIsCheckedBeforeWork) {
  TempDir d;
  const Protocol p = write_study(d);
  auto expect_error = [&](const std::string& store, const std::string& part) {
    try {
      ingest_study(p, store);
      FAIL() << store;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().file, store);
      EXPECT_NE(std::string(e.what()).find(part), std::string::npos) << e.what();
    }
  };
  expect_error("/proc/gazemill-test.gzm.h5", "cannot write in the folder /proc: ");
  expect_error(d.file("raw"), "is a folder; name the store file");
  expect_error(d.file("gazemill.toml") + "/s.gzm.h5", "does not exist (it is a file)");
  expect_no_store(d);
}

TEST(IngestErrors, TooLittleFreeSpaceIsFoundBeforeWork) {
  EXPECT_EQ(judge_free_space(150, 100), SpaceVerdict::enough);
  EXPECT_EQ(judge_free_space(100, 100), SpaceVerdict::enough);
  EXPECT_EQ(judge_free_space(99, 100), SpaceVerdict::tight);
  EXPECT_EQ(judge_free_space(49, 100), SpaceVerdict::too_little);
  EXPECT_EQ(estimated_store_bytes(40, 5), 15u);
  // A sparse input of 8 TiB (an estimate of 2 TiB) holds no bytes on the disk, but asks for more than any test machine has free.
  TempDir d;
  const Protocol p = write_study(d);
  fs::resize_file(d.file("raw/r02-a.tsv"), std::uint64_t{1} << 43);
  try {
    ingest_study(p, d.file("tiny.gzm.h5"));
    FAIL();
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("not enough free space in " + d.path().string()), std::string::npos) << e.what();
  }
}
