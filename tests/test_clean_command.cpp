// clean, audit and verify end to end on the checked-in simulated study:
// derived datasets identical between runs, verify passing on an untouched
// study and failing, naming the datasets, when an input changes; protocol
// errors naming the rule and line with nothing written.

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <zlib.h>

#include "app/audit_report.h"
#include "app/clean.h"
#include "tests/stage_helpers.h"
#include "app/protocol_parser.h"
#include "app/verify.h"
#include "io/cleaning_io.h"
#include "io/store_compare.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"
#include "test_support.h"

using namespace gazemill;
using gazemill::test_support::TempDir;
namespace fs = std::filesystem;

namespace {

const char* kRules = R"(
[detection]
method = "ivt"
[detection.parameters]
velocity_threshold_deg_s = 20

[[cleaning]]
name = "merge under 80 ms"
kind = "merge_short_fixations"
max_duration_ms = 80
max_distance_deg = 0.5
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
name = "blinks"
kind = "delete_fixations_near_blinks"
within_ms = 50

[[cleaning]]
name = "data loss"
kind = "exclude_trials_with_data_loss"
max_missing_percent = 5

[[cleaning]]
name = "few fixations"
kind = "exclude_trials_with_few_fixations"
min_fixations = 8

[[cleaning]]
name = "lost participants"
kind = "exclude_participants_by_trial_loss"
max_excluded_percent = 25
)";

std::string study(const TempDir& d, const std::string& extra = kRules) {
  fs::copy(std::string(GAZEMILL_FIXTURES) + "/demo-study", d.path() / "study", fs::copy_options::recursive);
  const std::string proto = (d.path() / "study" / "gazemill.toml").string();
  std::ofstream(proto, std::ios::app) << extra;
  return proto;
}

void run_all(const std::string& proto, const std::string& store, const std::string& reports) {
  const Protocol p = parse_protocol_file(proto);
  ingest_study(p, store);
  detect_study(p, store);
  clean_study(p, store, reports);
}

}  // namespace

TEST(CleanCommand, AuditBalancesAndDerivedDatasetsAreIdenticalBetweenRuns) {
  TempDir d;
  const std::string proto = study(d);
  run_all(proto, d.file("a.gzm.h5"), d.file("ra"));
  run_all(proto, d.file("b.gzm.h5"), d.file("rb"));
  const auto diffs = compare_store_datasets(d.file("a.gzm.h5"), d.file("b.gzm.h5"));
  for (const auto& x : diffs) ADD_FAILURE() << x.path << ": " << x.what;

  StudyStoreReader store(d.file("a.gzm.h5"));
  const AuditReport r = read_audit(store);
  EXPECT_NO_THROW(r.check_conservation());
  ASSERT_EQ(r.rules.size(), 7u);
  EXPECT_EQ(r.rules[0], "merge under 80 ms");
  // The cleaned fixations in the store are exactly the kept ones of the audit.
  std::uint64_t kept = 0, input = 0;
  for (const auto& [g, t] : r.totals) {
    kept += t.kept[1];
    input += t.input[1];
  }
  std::uint64_t stored = 0, events = 0;
  for (const auto& id : store.recording_ids()) {
    stored += read_clean_fixations(store, id).size();
    events += store.read_events(id).fixations.size();
  }
  EXPECT_EQ(stored, kept);
  EXPECT_EQ(events, input);  // raw events are kept beside the cleaned ones
  for (const char* f : {"audit.tsv", "audit_totals.tsv", "audit.json"}) EXPECT_TRUE(fs::exists(fs::path(d.file("ra")) / f)) << f;
  EXPECT_TRUE(fs::exists(d.file("ra/audit.tsv")));
  const auto s = *store.stage_record(Stage::clean);
  EXPECT_NE(s.protocol_text.find("merge under 80 ms"), std::string::npos);
}

TEST(CleanCommand, VerifyPassesThenFailsNamingDatasetsWhenAnInputChanges) {
  TempDir d;
  const std::string proto = study(d);
  const std::string store = d.file("s.gzm.h5");
  run_all(proto, store, d.file("tables"));
  std::ostringstream ok;
  EXPECT_TRUE(verify_store(store, ok)) << ok.str();
  EXPECT_NE(ok.str().find("verified"), std::string::npos);

  // Change one gaze value of one participant's export.
  const std::string raw = (d.path() / "study" / "raw" / "p03_s1.tsv.gz").string();
  std::string text;
  {
    gzFile f = gzopen(raw.c_str(), "rb");
    char buf[1 << 16];
    int n;
    while ((n = gzread(f, buf, sizeof buf)) > 0) text.append(buf, static_cast<std::size_t>(n));
    gzclose(f);
  }
  const auto line = text.find('\n', text.size() / 2) + 1;
  const auto tab = text.find('\t', line) + 1;
  text.insert(tab, "1");  // e.g. 512.34 -> 1512.34
  {
    gzFile f = gzopen(raw.c_str(), "wb");
    gzwrite(f, text.data(), static_cast<unsigned>(text.size()));
    gzclose(f);
  }
  std::ostringstream bad;
  EXPECT_FALSE(verify_store(store, bad));
  EXPECT_NE(bad.str().find("input changed: " + raw), std::string::npos) << bad.str();
  EXPECT_NE(bad.str().find("dataset differs (values): /recordings/p03_1/samples/left_x_px"), std::string::npos) << bad.str();
  EXPECT_NE(bad.str().find("NOT verified"), std::string::npos);
}

TEST(CleanCommand, BadRulesNameTheRuleAndLineAndWriteNothing) {
  // `line` counts within the appended text: 1 is the empty line that starts it.
  auto expect_error = [](const std::string& rules, std::size_t line, const std::string& field, const std::string& part) {
    TempDir d;
    const std::string proto = study(d, rules);
    std::size_t base = 0;
    {
      std::ifstream in(std::string(GAZEMILL_FIXTURES) + "/demo-study/gazemill.toml");
      std::string l;
      while (std::getline(in, l)) ++base;
    }
    try {
      parse_protocol_file(proto);
      FAIL() << rules;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().field, field) << e.what();
      EXPECT_NE(std::string(e.what()).find(part), std::string::npos) << e.what();
      EXPECT_EQ(e.where().file, proto);
      EXPECT_EQ(e.where().line, base + line) << e.what();
    }
    EXPECT_FALSE(fs::exists(d.path() / "study" / "harbour-news.gzm.h5"));
  };
  expect_error("\n[[cleaning]]\nname = \"r\"\nkind = \"drop_everything\"\n", 4, "cleaning[1].kind", "unknown rule kind \"drop_everything\"");
  expect_error("\n[[cleaning]]\nname = \"r\"\nkind = \"delete_short_fixations\"\n", 2, "cleaning[1].kind",
               "rule 'r' (delete_short_fixations): required parameter min_duration_ms is missing");
  expect_error("\n[[cleaning]]\nname = \"r\"\nkind = \"delete_short_fixations\"\nmin_duration = 80\n", 5, "cleaning[1].min_duration",
               "needs its unit in the name, e.g. min_duration_ms");
  expect_error("\n[[cleaning]]\nname = \"r\"\nkind = \"delete_long_fixations\"\nmax_duration_ms = -800\n", 5,
               "cleaning[1].max_duration_ms", "must be at least 0");
  expect_error("\n[[cleaning]]\nname = \"r\"\nkind = \"delete_long_fixations\"\nmax_duration_ms = 800\n[[cleaning]]\nname = \"r\"\n"
               "kind = \"delete_long_fixations\"\nmax_duration_ms = 900\n", 7, "cleaning[2].name", "names must be unique");
}

// Every count the audit prints comes from the ledger: check the printed table
// against the report it was printed from.
TEST(CleanCommand, PrintedAuditMatchesTheLedger) {
  TempDir d;
  const std::string proto = study(d);
  run_all(proto, d.file("a.gzm.h5"), d.file("tables"));
  const AuditReport r = read_audit(StudyStoreReader(d.file("a.gzm.h5")));
  std::ostringstream out;
  print_audit(r, false, out);
  const std::string text = out.str();
  std::array<std::uint64_t, kAuditLevels> input{}, kept{};
  for (const auto& [g, t] : r.totals) {
    for (std::size_t l = 0; l < kAuditLevels; ++l) {
      input[l] += t.input[l];
      kept[l] += t.kept[l];
    }
  }
  for (std::size_t l = 0; l < kAuditLevels; ++l) {
    // The totals line: level, input, kept, removed.
    std::istringstream lines(text);
    std::string line;
    bool found = false;
    while (std::getline(lines, line)) {
      std::istringstream words(line);
      std::string level;
      std::uint64_t a = 0, b = 0, c = 0;
      if (words >> level >> a >> b >> c && level == to_string(static_cast<AuditLevel>(l))) {
        EXPECT_EQ(a, input[l]);
        EXPECT_EQ(b, kept[l]);
        EXPECT_EQ(c, input[l] - kept[l]);
        found = true;
      }
    }
    EXPECT_TRUE(found) << to_string(static_cast<AuditLevel>(l));
  }
  // Each rule row's "removed" is the ledger's sequential count summed over participants and conditions.
  std::map<std::pair<std::size_t, std::string>, std::uint64_t> removed;
  for (const auto& row : audit_rows(r)) removed[{row.order, to_string(row.level)}] += row.removed_sequential;
  std::istringstream lines(text);
  std::string line;
  std::size_t rows_checked = 0;
  while (std::getline(lines, line)) {
    for (const auto& [key, n] : removed) {
      const std::string& name = r.rules[key.first - 1];
      if (line.rfind(std::to_string(key.first) + "  " + name, 0) == 0 && line.find("  " + key.second + " ") != std::string::npos) {
        std::istringstream tail(line.substr(line.find("  " + key.second + " ") + key.second.size() + 2));
        std::uint64_t printed = 0;
        tail >> printed;
        EXPECT_EQ(printed, n) << line;
        ++rows_checked;
      }
    }
  }
  EXPECT_EQ(rows_checked, removed.size());
}

// A run cleans participant by participant (app/clean.h): with a participant's
// sessions apart in the study's order (A, B, A, B), every fixation and trial
// keeps the id one state of the whole study gives it, and the parts are the
// whole study's outcome. Invented events; the reference is clean_events.
TEST(CleanByParticipant, SessionsApartKeepTheStudysIds) {
  std::vector<RecordingEvents> recordings;
  int seed = 0;
  for (const char* who : {"A", "B", "A", "B"}) {
    RecordingEvents r;
    r.meta.id = std::string(who) + "_" + std::to_string(recordings.size());
    r.meta.participant = who;
    r.meta.screen = {1920, 1080, 531, 299, 700};
    for (int t = 0; t < 3; ++t) {
      Trial trial;
      trial.id = std::to_string(t + 1);
      trial.start_us = t * 10'000'000;
      trial.end_us = trial.start_us + 5'000'000;
      trial.variables["item"] = std::to_string(t + 1);
      r.meta.trials.push_back(trial);
      r.events.trials.push_back({trial.id, Eye::left, {}, 5000, static_cast<std::uint64_t>(seed % 3 == 0 ? 3000 : 0)});
      const int fixations = 4 + seed++ % 3;
      for (int f = 0; f < fixations; ++f) {
        FixationEvent e;
        e.trial = trial.id;
        e.start_us = trial.start_us + f * 300'000;
        e.end_us = e.start_us + 40'000 + 50'000 * ((seed + f) % 4);  // 40 to 190 ms
        e.x_px = 500 + 30 * f;
        e.y_px = 540;
        r.events.fixations.push_back(e);
      }
    }
    recordings.push_back(std::move(r));
  }
  Protocol p;
  p.path = "gazemill.toml";
  p.cleaning = {{"merge", "merge_short_fixations", {{"max_duration_ms", 60}, {"max_distance_deg", 1}, {"max_gap_ms", 300}}, {}, 0, {}},
                {"short", "delete_short_fixations", {{"min_duration_ms", 80}}, {}, 0, {}},
                {"loss", "exclude_trials_with_data_loss", {{"max_missing_percent", 20}}, {}, 0, {}},
                {"lost", "exclude_participants_by_trial_loss", {{"max_excluded_percent", 20}}, {}, 0, {}}};
  const CleaningOutcome whole = clean_events(p, recordings);
  std::map<std::uint32_t, bool> kept_whole, kept_parts;
  for (const auto& part : whole.state.participants) {
    for (const auto& t : part.trials) {
      for (const auto& f : t.fixations) kept_whole[f.id] = f.kept;
    }
  }
  std::vector<std::string> order;
  std::map<std::uint32_t, std::pair<std::size_t, std::string>> removals;
  const AuditReport audit = clean_events_by_participant(p, recordings, [&](CleaningOutcome&& part) {
    order.push_back(part.state.participants.at(0).participant);
    for (const auto& t : part.state.participants.at(0).trials) {
      for (const auto& f : t.fixations) kept_parts[f.id] = f.kept;
    }
    removals.insert(part.fixation_removals.begin(), part.fixation_removals.end());
  });
  EXPECT_EQ(order, (std::vector<std::string>{"A", "B"}));
  std::size_t input = 0;
  for (const auto& r : recordings) input += r.events.fixations.size();
  ASSERT_EQ(kept_whole.size(), input);  // every input fixation, each under one id
  EXPECT_EQ(kept_parts, kept_whole);
  EXPECT_EQ(removals, whole.fixation_removals);
  EXPECT_FALSE(removals.empty());
  std::size_t merged = 0;
  for (const auto& [id, why] : whole.fixation_removals) merged += why.first == 0;
  EXPECT_GT(merged, 0u) << "the merge rule joined some fixations";
  for (const auto& [group, t] : whole.report.totals) {
    EXPECT_EQ(audit.totals.at(group).input, t.input);
    EXPECT_EQ(audit.totals.at(group).kept, t.kept);
  }
  EXPECT_EQ(audit.sequential.size(), whole.report.sequential.size());
  // A participant whose trials went by the loss rule goes too (here B or A: as the whole study says).
  std::uint64_t participants_removed = 0;
  for (const auto& [key, c] : whole.report.sequential) participants_removed += c.removed[static_cast<std::size_t>(AuditLevel::participant)];
  EXPECT_GT(participants_removed, 0u);
}
