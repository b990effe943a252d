#include <gtest/gtest.h>

#include "app/trial_pattern_check.h"
#include "pipeline/input_error.h"
#include "pipeline/trial_segmenter.h"

using namespace gazemill;

namespace {

TrialSegmentationSpec spec() {
  TrialSegmentationSpec s;
  s.start_pattern = R"(^BEGIN (?<trial>\d+)$)";
  s.end_pattern = R"(^FINISH (?<trial>\d+)$)";
  s.variable_patterns = {R"(^STIM item=(?<item>\w+) cond=(?<condition>\w+)$)", R"(^ANSWER (?<correct>[01])$)"};
  s.marker_patterns = {{"display_onset", "^SHOW$"}};
  return s;
}

std::vector<Message> msgs(std::initializer_list<std::pair<Microseconds, const char*>> list) {
  std::vector<Message> out;
  for (const auto& [t, s] : list) out.push_back({t, s});
  return out;
}

// Two trials: the first with every pattern's message (SHOW twice), the second with STIM only.
std::vector<Message> two_trials() {
  return msgs({{100, "calibration ok"},
               {1000, "BEGIN 1"},
               {1001, "STIM item=12 cond=rare"},
               {1500, "SHOW"},
               {1700, "SHOW"},
               {4000, "ANSWER 1"},
               {4100, "FINISH 1"},
               {5000, "BEGIN 2"},
               {5001, "STIM item=3 cond=frequent"},
               {9000, "FINISH 2"}});
}

}  // namespace

TEST(TrialSegmenter, SplitsTrialsAndSetsVariablesAndMarkers) {
  TrialSegmenter seg(spec(), UnterminatedTrialPolicy::error);
  RepairCounts repairs;
  const auto trials = seg.segment(two_trials(),
                                  {}, "f.tsv", repairs);
  ASSERT_EQ(trials.size(), 2u);
  EXPECT_EQ(trials[0].id, "1");
  EXPECT_EQ(trials[0].start_us, 1000);
  EXPECT_EQ(trials[0].end_us, 4100);
  EXPECT_EQ(trials[0].variable("item"), "12");
  EXPECT_EQ(trials[0].variable("condition"), "rare");
  EXPECT_EQ(trials[0].variables.at("correct"), "1");
  EXPECT_EQ(trials[0].markers.at("display_onset"), 1500);  // the first match wins
  EXPECT_EQ(trials[1].variable("condition"), "frequent");
  EXPECT_EQ(trials[1].variables.count("correct"), 0u);
  EXPECT_EQ(trials[1].markers.count("display_onset"), 0u);
  EXPECT_TRUE(repairs.empty());
}

TEST(TrialSegmenter, StartWithoutEndNamesTheLine) {
  TrialSegmenter seg(spec(), UnterminatedTrialPolicy::error);
  RepairCounts repairs;
  try {
    seg.segment(msgs({{1, "BEGIN 1"}, {2, "BEGIN 2"}, {3, "FINISH 2"}}), {10, 20, 30}, "m.tsv", repairs);
    FAIL();
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().file, "m.tsv");
    EXPECT_EQ(e.where().line, 10u);
    EXPECT_NE(std::string(e.what()).find("trial '1'"), std::string::npos);
  }
  EXPECT_THROW(seg.segment(msgs({{1, "BEGIN 1"}}), {}, "m.tsv", repairs), InputError);
  EXPECT_THROW(seg.segment(msgs({{1, "FINISH 1"}}), {}, "m.tsv", repairs), InputError);
  EXPECT_THROW(seg.segment(msgs({{1, "BEGIN 1"}, {2, "FINISH 3"}}), {}, "m.tsv", repairs), InputError);
  EXPECT_THROW(seg.segment(msgs({{1, "BEGIN 1"}, {2, "FINISH 1"}, {3, "BEGIN 1"}, {4, "FINISH 1"}}), {}, "m.tsv", repairs),
               InputError);
}

TEST(TrialSegmenter, DropPolicyCountsWhatItDrops) {
  TrialSegmenter seg(spec(), UnterminatedTrialPolicy::drop);
  RepairCounts repairs;
  const auto trials = seg.segment(
      msgs({{1, "FINISH 0"}, {2, "BEGIN 1"}, {3, "BEGIN 2"}, {4, "FINISH 2"}, {5, "BEGIN 3"}}), {}, "m.tsv", repairs);
  ASSERT_EQ(trials.size(), 1u);
  EXPECT_EQ(trials[0].id, "2");
  EXPECT_EQ(repairs.at("unterminated_trial_dropped"), 2u);
  EXPECT_EQ(repairs.at("trial_end_without_start_dropped"), 1u);
}

TEST(TrialSegmenter, MessageTooLongToMatchNamesTheLine) {
  TrialSegmenter seg(spec(), UnterminatedTrialPolicy::error);
  RepairCounts repairs;
  std::vector<Message> m = msgs({{1, "BEGIN 1"}, {2, "FINISH 1"}});
  m.insert(m.begin() + 1, Message{1, std::string(20000000, 'x')});
  try {
    seg.segment(m, {10, 20, 30}, "m.tsv", repairs);
    FAIL();
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().file, "m.tsv");
    EXPECT_EQ(e.where().line, 20u);
    EXPECT_NE(std::string(e.what()).find("too long"), std::string::npos) << e.what();
  }
}

// What each pattern found, counted by hand from the messages: the STIM
// pattern is in both trials, ANSWER in the first, SHOW in the first (twice,
// counted once).
TEST(TrialSegmenter, CountsTheTrialsEachPatternFoundAMessageIn) {
  TrialSegmenter seg(spec(), UnterminatedTrialPolicy::error);
  RepairCounts repairs;
  TrialPatternUse use;
  const auto trials = seg.segment(two_trials(),
                                  {}, "f.tsv", repairs, &use);
  EXPECT_EQ(use.variable_trials, (std::vector<std::size_t>{2, 1}));
  EXPECT_EQ(use.first_trial_messages,
            (std::vector<std::string>{"BEGIN 1", "STIM item=12 cond=rare", "SHOW", "SHOW", "ANSWER 1", "FINISH 1"}));
  count_marker_use(trials, spec().marker_patterns, use);
  EXPECT_EQ(use.trials, 2u);
  EXPECT_EQ(use.marker_trials.at("display_onset"), 1u);
}

// A pattern that finds nothing in a whole study is a typo far more often than
// a design (common practice, no source): an error for the whole study, only a
// warning when some recordings were not read this run (they may have it) or
// when one recording lacks a marker the others have.
TEST(TrialPatternCheck, APatternFoundInNoTrialOfTheStudyIsAnErrorNamingItsLine) {
  Protocol p;
  p.path = "study.toml";
  p.trials = spec();
  p.trials.marker_lines["display_onset"] = 17;
  p.trials.variables_line = 12;
  TrialPatternUse a, b;
  a.trials = b.trials = 10;
  a.variable_trials = b.variable_trials = {10, 10};
  a.marker_trials["display_onset"] = 10;
  b.marker_trials["display_onset"] = 0;  // this recording lacks it: a warning
  a.first_trial_messages = {"BEGIN 1", "FINISH 1"};
  std::vector<std::pair<std::string, const TrialPatternUse*>> read = {{"p1", &a}, {"p2", &b}};
  EXPECT_NO_THROW(check_trial_patterns(p, read, true));

  a.marker_trials["display_onset"] = 0;
  try {
    check_trial_patterns(p, read, true);
    FAIL() << "a marker in no trial of the study passed";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().file, "study.toml");
    EXPECT_EQ(e.where().line, 17u);
    EXPECT_EQ(e.where().field, "trials.markers.display_onset");
    EXPECT_NE(std::string(e.what()).find("\"^SHOW$\""), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("20 trials of the 2 recordings"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("\"BEGIN 1\" \"FINISH 1\""), std::string::npos) << e.what();
  }
  EXPECT_NO_THROW(check_trial_patterns(p, read, false));

  a.marker_trials["display_onset"] = 3;
  a.variable_trials = b.variable_trials = {10, 0};
  try {
    check_trial_patterns(p, read, true);
    FAIL() << "a variables pattern in no trial of the study passed";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().line, 12u);
    EXPECT_EQ(e.where().field, "trials.variables");
    EXPECT_NE(std::string(e.what()).find("ANSWER"), std::string::npos) << e.what();
  }
}
