// Fixation lists in ([input] format = "fixations"): a lab's own list of
// fixations read as the detected events, so that cleaning, drift
// correction and the measures run on it unchanged. The small lists here are
// invented for these tests; the expected values are worked out by hand from
// them (common practice, no source). The round trip takes gazemill's own
// fixations.tsv of a simulated study back in and expects the same measures.

#include <gtest/gtest.h>

#include <zlib.h>

#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include "app/protocol_parser.h"
#include "app/study_run.h"
#include "app/verify.h"
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

const char* kScreen = R"(
[screen]
width_px = 1920
height_px = 1080
width_mm = 531
height_mm = 299
viewing_distance_mm = 700
)";

std::string list_protocol(const std::string& fixations_section, const std::string& rest = "") {
  return std::string(R"([input]
format = "fixations"
files = ["lists/*.csv"]
filename_pattern = '(?<participant>p\d+)'
)") + fixations_section + kScreen + R"(
[trials]
start = '^trial (?<trial>\d+) item (?<item>\w+)$'
end = '^trial end'
)" + rest;
}

const char* kCommaList = R"([input.fixations]
delimiter = "comma"
time_unit = "ms"
start_column = "t_start"
duration_column = "dur"
x_column = "fx"
y_column = "fy"
pupil_column = "pupil"
eye = "right"
message_column = "note"
)";

// Two trials: message rows mark them; one fixation before the first trial
// and one between the trials belong to none.
const char* kCommaRows =
    "t_start,dur,fx,fy,pupil,note\n"
    "900,50,10,10,,\n"
    "1000,,,,,trial 1 item a\n"
    "1010,200,300.5,400.25,5.5,\n"
    "1250,180,420,401,NA,\n"
    "1500,,,,,trial end\n"
    "1600,90,1,1,,\n"
    "2000,,,,,trial 2 item b\n"
    "2100,250,640,410,6,\n"
    "2600,,,,,trial end\n";

}  // namespace

TEST(FixationList, RowsBecomeTheEventsOfTheTrialTheyStartIn) {
  TempDir d;
  d.write("lists/p01.csv", kCommaRows);
  const std::string text = list_protocol(kCommaList);
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  const StudyRunReport r = ingest_study(p, d.file("s.gzm.h5"));
  EXPECT_EQ(r.stages.at(Stage::detect), "imported");

  StudyStoreReader store(d.file("s.gzm.h5"));
  const Recording rec = store.read_recording("p01", false);
  ASSERT_EQ(rec.trials.size(), 2u);
  EXPECT_EQ(rec.trials[0].variable("item"), "a");
  EXPECT_EQ(rec.trials[1].start_us, 2000000);
  const DetectedEvents ev = store.read_events("p01");
  ASSERT_EQ(ev.fixations.size(), 3u);  // 900 ms and 1600 ms start in no trial
  EXPECT_EQ(ev.fixations[0].trial, "1");
  EXPECT_EQ(ev.fixations[0].start_us, 1010000);
  EXPECT_EQ(ev.fixations[0].end_us, 1210000);  // 1010 ms + 200 ms
  EXPECT_DOUBLE_EQ(ev.fixations[0].x_px, 300.5);
  EXPECT_DOUBLE_EQ(ev.fixations[0].y_px, 400.25);
  EXPECT_DOUBLE_EQ(ev.fixations[0].pupil, 5.5);
  EXPECT_TRUE(std::isnan(ev.fixations[1].pupil));  // "NA"
  EXPECT_EQ(ev.fixations[0].eye, Eye::right);
  EXPECT_EQ(ev.fixations[2].trial, "2");
  EXPECT_TRUE(ev.saccades.empty());
  ASSERT_EQ(ev.trials.size(), 2u);
  EXPECT_EQ(ev.trials[0].samples, 0u);
  // x of 960 px is the screen centre: 0 deg; 300.5 px is left of it.
  EXPECT_LT(ev.fixations[0].x_deg, 0.0);

  // The detect stage's record says the events were imported, not detected.
  const auto detect = store.stage_record(Stage::detect);
  ASSERT_TRUE(detect);
  EXPECT_EQ(detect->state, StageState::current);
  EXPECT_NE(detect->settings_json.find("imported, not detected"), std::string::npos) << detect->settings_json;
  EXPECT_EQ(store.recording_ids().size(), 1u);
}

TEST(FixationList, DetectOnAnImportedStoreExplainsAndChangesNothing) {
  TempDir d;
  d.write("lists/p01.csv", kCommaRows);
  const std::string text = list_protocol(kCommaList);
  const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
  ingest_study(p, d.file("s.gzm.h5"));
  const auto before = fs::last_write_time(d.file("s.gzm.h5"));
  try {
    detect_study(p, d.file("s.gzm.h5"));
    FAIL() << "detect ran on imported fixations";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("nothing to detect"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("gazemill clean"), std::string::npos) << e.what();
  }
  EXPECT_EQ(fs::last_write_time(d.file("s.gzm.h5")), before);
  // Clean runs on the imported events as on detected ones.
  const AuditReport audit = clean_study(p, d.file("s.gzm.h5"), "");
  EXPECT_FALSE(audit.totals.empty());
}

TEST(FixationList, ProtocolMistakesAreNamed) {
  auto error_of = [](const std::string& text) -> std::string {
    try {
      parse_protocol_text(text, "p.toml");
    } catch (const InputError& e) {
      return e.what();
    }
    return "";
  };
  // No mapping.
  EXPECT_NE(error_of(list_protocol("")).find("input.fixations"), std::string::npos);
  // Both an end and a duration.
  std::string both = kCommaList;
  both += "end_column = \"t_end\"\n";
  EXPECT_NE(error_of(list_protocol(both)).find("exactly one of end_column"), std::string::npos);
  // No eye column and no eye.
  std::string no_eye = kCommaList;
  no_eye.replace(no_eye.find("eye = \"right\"\n"), 14, "");
  EXPECT_NE(error_of(list_protocol(no_eye)).find("which eye"), std::string::npos) << error_of(list_protocol(no_eye));
  // Detection settings would be ignored.
  EXPECT_NE(error_of(list_protocol(kCommaList, "[detection]\nmethod = \"ivt\"\n")).find("no effect"), std::string::npos);
  // A rule that needs samples.
  const std::string loss = "[[cleaning]]\nname = \"loss\"\nkind = \"exclude_trials_with_data_loss\"\nmax_missing_percent = 30\n";
  EXPECT_NE(error_of(list_protocol(kCommaList, loss)).find("needs samples"), std::string::npos);
  // A unit that is none.
  std::string unit = kCommaList;
  unit.replace(unit.find("\"ms\""), 4, "\"msec\"");
  EXPECT_NE(error_of(list_protocol(unit)).find("time_unit"), std::string::npos);
}

TEST(FixationList, BadCellsNameFileLineAndColumn) {
  struct Case {
    std::string row, column, expected;
  };
  const std::vector<Case> cases = {
      {"1010,200,3o0,400,,", "fx", "expected a position in px, found '3o0'"},
      {"1010,200,300,,,", "fy", "expected the fixation's position in px, found none"},
      {"1010,-5,300,400,,", "dur", "expected a positive duration in ms"},
      {"1010,2;0,300,400,,", "dur", "expected a time in ms, found '2;0'"},
      {"1010,200,300.5,400,5,5,", "", "expected 6 fields as in the header, found 7"},
  };
  for (const auto& c : cases) {
    TempDir d;
    const std::string file = d.write("lists/p01.csv", std::string("t_start,dur,fx,fy,pupil,note\n1000,,,,,trial 1 item a\n") + c.row +
                                                          "\n1500,,,,,trial end\n");
    const std::string text = list_protocol(kCommaList);
    const Protocol p = parse_protocol_text(text, d.write("gazemill.toml", text));
    try {
      ingest_study(p, d.file("s.gzm.h5"));
      ADD_FAILURE() << "no error for " << c.row;
    } catch (const InputError& e) {
      const std::string what = e.what();
      EXPECT_NE(what.find(file), std::string::npos) << what;
      EXPECT_NE(what.find(":3"), std::string::npos) << what;  // the line
      if (!c.column.empty()) {
        EXPECT_NE(what.find(c.column), std::string::npos) << what;
      }
      EXPECT_NE(what.find(c.expected), std::string::npos) << what;
    }
    EXPECT_FALSE(fs::exists(d.file("s.gzm.h5"))) << "a failed ingest left a store";
  }
  // A mapped column that is not there, and an eye text nobody named.
  TempDir d;
  d.write("lists/p01.csv", "t_start,dur,fx,fy,pupil,note,side\n1000,,,,,trial 1 item a,\n1010,200,300,400,,,R\n1500,,,,,trial end,\n");
  std::string eyes = kCommaList;
  eyes.replace(eyes.find("eye = \"right\"\n"), 14, "eye_column = \"side\"\nleft_value = \"L\"\nright_value = \"Right\"\n");
  std::string text = list_protocol(eyes);
  try {
    ingest_study(parse_protocol_text(text, d.write("gazemill.toml", text)), d.file("s.gzm.h5"));
    ADD_FAILURE() << "no error for an unknown eye";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find(":3"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("expected \"L\" or \"Right\""), std::string::npos) << e.what();
  }
  std::string missing = kCommaList;
  missing.replace(missing.find("\"pupil\""), 7, "\"pupil_area\"");
  text = list_protocol(missing);
  try {
    ingest_study(parse_protocol_text(text, d.write("gazemill.toml", text)), d.file("s.gzm.h5"));
    ADD_FAILURE() << "no error for a missing column";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("pupil_area"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("the columns are t_start, dur"), std::string::npos) << e.what();
  }
}

// The round trip: a simulated study run from its samples, its fixations.tsv
// split into one list per recording, read back with the recordings'
// messages, gives the same measures row by row. Durations are exact (times
// are whole microseconds both ways); positions come back at the table's
// 0.01 px, which moves no fixation across a region or line here.
TEST(FixationList, ExportedFixationsComeBackToTheSameMeasures) {
  TempDir d;
  sim::SimulationConfig c;
  c.design = sim::demo_design(8, 1);
  c.design.participants = 2;
  c.signal.sample_rate_hz = 250;
  c.seed = 7;
  sim::ExportOptions eo;
  eo.bids = false;
  const std::string proto = sim::simulate_to_folder(c, (d.path() / "study").string(), eo).protocol;
  std::string text;
  {
    std::ifstream in(proto);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  const std::string rules = R"(
[[cleaning]]
name = "merge"
kind = "merge_short_fixations"
max_duration_ms = 80
max_distance_px = 20
max_gap_ms = 50

[[cleaning]]
name = "short"
kind = "delete_short_fixations"
min_duration_ms = 80

[[cleaning]]
name = "long"
kind = "delete_long_fixations"
max_duration_ms = 800

[[cleaning]]
name = "few"
kind = "exclude_trials_with_few_fixations"
min_fixations = 3
)";
  StudyRunOptions o;
  o.store_path = d.file("study/samples.gzm.h5");
  o.tables_folder = d.file("study/samples-tables");
  const StudyRunReport from_samples = run_study(parse_protocol_text(text + rules, proto), o);
  ASSERT_FALSE(from_samples.rows.empty());

  // One list per recording, as a lab keeps them, and its messages beside it.
  std::ifstream fx(d.file("study/samples-tables/fixations.tsv"));
  std::string header, line;
  std::getline(fx, header);
  std::map<std::string, std::string> lists;
  while (std::getline(fx, line)) lists[line.substr(0, line.find('\t'))] += line + "\n";
  ASSERT_EQ(lists.size(), 2u);
  for (const auto& [participant, rows] : lists) {
    d.write("study/lists/" + participant + "_s1.tsv", header + "\n" + rows);
    gzFile raw = gzopen(d.file("study/raw/" + participant + "_s1.tsv.gz").c_str(), "rb");
    ASSERT_NE(raw, nullptr);
    std::string all;
    char buf[1 << 16];
    for (int n; (n = gzread(raw, buf, sizeof buf)) > 0;) all.append(buf, static_cast<std::size_t>(n));
    gzclose(raw);
    std::istringstream samples(all);
    std::string messages = "time_us\ttext\n", row;
    std::getline(samples, row);
    while (std::getline(samples, row)) {
      const auto tab = row.rfind('\t');
      if (tab + 1 < row.size()) messages += row.substr(0, row.find('\t')) + "\t" + row.substr(tab + 1) + "\n";
    }
    d.write("study/lists/" + participant + "_s1_messages.tsv", messages);
  }
  const std::string after_input = text.substr(text.find("[screen]"));
  const std::string list_text = text.substr(0, text.find("[input]")) + R"([input]
format = "fixations"
files = ["lists/p*_s1.tsv"]
filename_pattern = '(?<participant>p\d+)_s(?<session>\d+)'

[input.fixations]
time_unit = "us"
start_column = "start_us"
end_column = "end_us"
x_column = "x_px"
y_column = "y_px"
pupil_column = "pupil"
eye_column = "eye"

[input.messages]
file = "{dir}/{stem}_messages.tsv"
time_column = "time_us"
text_column = "text"

)" + after_input + rules;
  StudyRunOptions o2;
  o2.store_path = d.file("study/lists.gzm.h5");
  o2.tables_folder = d.file("study/lists-tables");
  const Protocol list_protocol = parse_protocol_text(list_text, d.write("study/lists.toml", list_text));
  const StudyRunReport from_lists = run_study(list_protocol, o2);
  EXPECT_EQ(from_lists.stages.at(Stage::detect), "imported");
  EXPECT_EQ(from_lists.stages.at(Stage::measure), "ran");

  const auto& a = from_samples.rows;
  const auto& b = from_lists.rows;
  ASSERT_EQ(a.size(), b.size());
  for (std::size_t i = 0; i < a.size(); ++i) {
    SCOPED_TRACE("row " + std::to_string(i) + ": " + a[i].participant + " trial " + a[i].trial + " region " + std::to_string(a[i].region));
    EXPECT_EQ(a[i].participant, b[i].participant);
    EXPECT_EQ(a[i].trial, b[i].trial);
    EXPECT_EQ(a[i].region, b[i].region);
    EXPECT_EQ(a[i].skipped, b[i].skipped);
    EXPECT_EQ(a[i].first_fixation_ms, b[i].first_fixation_ms);
    EXPECT_EQ(a[i].single_fixation_ms, b[i].single_fixation_ms);
    EXPECT_EQ(a[i].gaze_duration_ms, b[i].gaze_duration_ms);
    EXPECT_EQ(a[i].go_past_ms, b[i].go_past_ms);
    EXPECT_EQ(a[i].total_time_ms, b[i].total_time_ms);
    EXPECT_EQ(a[i].second_pass_ms, b[i].second_pass_ms);
    EXPECT_EQ(a[i].regression_out, b[i].regression_out);
    EXPECT_EQ(a[i].regression_in, b[i].regression_in);
    EXPECT_EQ(a[i].first_pass_fixations, b[i].first_pass_fixations);
    EXPECT_EQ(a[i].total_fixations, b[i].total_fixations);
    EXPECT_EQ(a[i].landing_chars.has_value(), b[i].landing_chars.has_value());
    if (a[i].landing_chars && b[i].landing_chars) {
      EXPECT_NEAR(*a[i].landing_chars, *b[i].landing_chars, 0.01 / 12.0 + 1e-9);
    }
    EXPECT_EQ(a[i].incoming_saccade_deg.has_value(), b[i].incoming_saccade_deg.has_value());
    // Degrees of a mean position against the mean of the samples' degrees: alike to well under a hundredth.
    if (a[i].incoming_saccade_deg && b[i].incoming_saccade_deg) {
      EXPECT_NEAR(*a[i].incoming_saccade_deg, *b[i].incoming_saccade_deg, 0.01);
    }
  }
  // The audit counts the same fixations and trials, and no samples.
  ASSERT_TRUE(from_lists.audit);
  // verify re-imports the lists and finds every dataset as it was.
  std::ostringstream out;
  EXPECT_TRUE(verify_store(o2.store_path, out)) << out.str();
}

// A list read in the wrong unit, or whose fixations all fall outside the
// trials, is an error naming the file and the key (a newcomer's trial: it
// gave a mean first fixation of 252 766 ms with exit 0). Reading fixations
// last about 200-300 ms (Rayner 1998, from memory): the median of this list
// is 180 ms in ms, 0.18 ms read as us.
TEST(FixationList, AWrongUnitOrClockIsAnError) {
  TempDir d;
  d.write("lists/p01.csv", kCommaRows);
  std::string unit = kCommaList;
  unit.replace(unit.find("time_unit = \"ms\""), 16, "time_unit = \"us\"");
  const std::string text = list_protocol(unit);
  try {
    ingest_study(parse_protocol_text(text, d.write("gazemill.toml", text)), d.file("s.gzm.h5"));
    FAIL() << "a list in the wrong unit passed";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().field, "input.fixations.time_unit");
    EXPECT_NE(std::string(e.what()).find("median 0.18 ms"), std::string::npos) << e.what();
  }
  EXPECT_FALSE(fs::exists(d.file("s.gzm.h5")));

  TempDir e;
  e.write("lists/p01.csv",
          "t_start,dur,fx,fy,pupil,note\n"
          "100,200,300,400,,\n"
          "400,180,420,401,,\n"
          "5000,,,,,trial 1 item a\n"
          "6000,,,,,trial end\n");
  const std::string same = list_protocol(kCommaList);
  try {
    ingest_study(parse_protocol_text(same, e.write("gazemill.toml", same)), e.file("s.gzm.h5"));
    FAIL() << "a list with no fixation in a trial passed";
  } catch (const InputError& x) {
    EXPECT_EQ(x.where().field, "input.fixations");
    EXPECT_NE(std::string(x.what()).find("none of its 2 fixations starts within a trial"), std::string::npos) << x.what();
  }
}
