// Cleaning rules on hand-built fixation lists, each effect worked out by hand
// and written beside the check; the audit's attribution and its conservation.

#include <gtest/gtest.h>

#include <random>

#include "filters/cleaning_engine.h"
#include "pipeline/input_error.h"
#include "tests/cleaning_helpers.h"

using namespace gazemill;
using namespace gazemill::cleaning_test;

namespace {

std::uint64_t seq(const CleaningOutcome& o, std::size_t r, AuditLevel l, const std::string& cond = "rare") {
  auto it = o.report.sequential.find({r, "p1", l == AuditLevel::participant ? "" : cond});
  if (it == o.report.sequential.end()) return 0;
  return it->second.removed[static_cast<std::size_t>(l)] + (l == AuditLevel::fixation ? it->second.merged : 0);
}

std::uint64_t alone(const CleaningOutcome& o, std::size_t r, AuditLevel l, const std::string& cond = "rare") {
  auto it = o.report.alone.find({r, "p1", l == AuditLevel::participant ? "" : cond});
  if (it == o.report.alone.end()) return 0;
  return it->second.removed[static_cast<std::size_t>(l)] + (l == AuditLevel::fixation ? it->second.merged : 0);
}

}  // namespace

// Eskenazi (2023, Behavior Research Methods), stage 1: a fixation under 80 ms
// is merged with a longer one within 0.5 deg. methods.md section 7's case:
// A 60 ms at 10.0 deg, B 200 ms at 10.4 deg, C 300 ms at 12 deg -> A joins B:
// 260 ms (durations summed), at B's position; C is 2 deg away and stays.
TEST(MergeShortFixations, StageOneFromThePublishedPractice) {
  std::uint32_t id = 0;
  const auto input = state_of({trial_of({{0, 60, 10.0}, {90, 200, 10.4}, {320, 300, 12.0}}, id)});
  const auto o = run_cleaning(input, {rule("stage 1", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_deg", 0.5}, {"max_gap_ms", 50}})});
  EXPECT_EQ(kept_durations(o), (std::vector<double>{260, 300}));
  const auto& b = o.state.participants[0].trials[0].fixations[1];
  EXPECT_DOUBLE_EQ(b.fixation.x_deg, 10.4);
  EXPECT_EQ(b.merged_count, 2u);
  EXPECT_EQ(b.fixation.start_us, 0);  // the merged fixation spans both
  EXPECT_EQ(b.fixation.end_us, 290000);
  EXPECT_TRUE(o.state.participants[0].trials[0].fixations[0].merged_away);
  EXPECT_EQ(o.state.participants[0].trials[0].fixations[0].merged_into, b.id);
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 1u);
}

// The choices the paper leaves open, each worked by hand.
TEST(MergeShortFixations, PositionDurationAndNeighbourChoices) {
  std::uint32_t id = 0;
  const auto input = state_of({trial_of({{0, 60, 10.0}, {90, 200, 10.4}}, id)});
  // Weighted position: (10.4 * 200 + 10.0 * 60) / 260 = 10.307692; span: 0..290 ms = 290 ms.
  auto o = run_cleaning(input, {rule("w", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_deg", 0.5}, {"max_gap_ms", 50}},
                                     {{"position", "weighted"}, {"duration", "span"}})});
  EXPECT_NEAR(o.state.participants[0].trials[0].fixations[1].fixation.x_deg, 10.307692, 1e-6);
  // The pixels likewise: x_px = 960 + 40 x_deg, so (1376 * 200 + 1360 * 60) / 260 = 1372.307692.
  EXPECT_NEAR(o.state.participants[0].trials[0].fixations[1].fixation.x_px, 1372.307692, 1e-6);
  EXPECT_EQ(kept_durations(o), (std::vector<double>{290}));

  // A 50 ms fixation between a 200 ms one 0.3 deg left and a 300 ms one 0.2 deg right.
  id = 0;
  const auto between = state_of({trial_of({{0, 200, 5.0}, {230, 50, 5.3}, {310, 300, 5.5}}, id)});
  auto pick = [&](const std::string& prefer) {
    const auto r = run_cleaning(between, {rule("m", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_deg", 0.5}, {"max_gap_ms", 50}},
                                                {{"prefer", prefer}})});
    return kept_durations(r);
  };
  EXPECT_EQ(pick("nearer"), (std::vector<double>{200, 350}));    // 0.2 < 0.3: the next one
  EXPECT_EQ(pick("previous"), (std::vector<double>{250, 300}));
  EXPECT_EQ(pick("next"), (std::vector<double>{200, 350}));
  EXPECT_EQ(pick("longer"), (std::vector<double>{200, 350}));    // 300 > 200

  // By hand: 60 ms at 5.0 and 200 ms at 5.1 are 200 ms apart (more than max_gap_ms 50): no merge.
  // 30 ms at 7.0: its previous neighbour is 1.9 deg away and its next one is shorter: it stays.
  // 20 ms at 7.1: its previous neighbour (30 ms, 0.1 deg, 30 ms gap) is longer: it joins it, 50 ms.
  id = 0;
  const auto apart = state_of({trial_of({{0, 60, 5.0}, {260, 200, 5.1}, {500, 30, 7.0}, {560, 20, 7.1}}, id)});
  const auto r = run_cleaning(apart, {rule("m", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_deg", 0.5}, {"max_gap_ms", 50}})});
  EXPECT_EQ(kept_durations(r), (std::vector<double>{60, 200, 50}));
}

// Duration limits (typical 80 ms and 800 ms, Eskenazi 2023): "shorter than"
// and "longer than" are strict.
TEST(FixationFilters, DurationLimits) {
  std::uint32_t id = 0;
  const auto input = state_of({trial_of({{0, 50, 0}, {100, 79, 0}, {200, 80, 0}, {300, 81, 0}, {400, 799, 0},
                                         {1300, 800, 0}, {2200, 801, 0}, {3100, 1300, 0}}, id)});
  const auto o = run_cleaning(input, {rule("short", "delete_short_fixations", {{"min_duration_ms", 80}}),
                                      rule("long", "delete_long_fixations", {{"max_duration_ms", 800}})});
  EXPECT_EQ(kept_durations(o), (std::vector<double>{80, 81, 799, 800}));
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 2u);
  EXPECT_EQ(seq(o, 1, AuditLevel::fixation), 2u);
}

TEST(FixationFilters, NearBlinksAndOutsideTheScreen) {
  std::uint32_t id = 0;
  auto t = trial_of({{700, 260, 0}, {700, 240, 1}, {1240, 100, 2}, {1260, 100, 3}, {2000, 100, -30}}, id);
  t.blinks.push_back({"1", Eye::left, 1'000'000, 1'200'000});
  const auto input = state_of({t});
  // Within 50 ms: ends at 960 (40 ms before) and starts at 1240 (40 ms after) go; 940 and 1260 stay.
  auto o = run_cleaning(input, {rule("blinks", "delete_fixations_near_blinks", {{"within_ms", 50}})});
  EXPECT_EQ(kept_durations(o), (std::vector<double>{240, 100, 100}));
  // x = 960 + 40 * -30 = -240 px: outside the screen, inside with a 300 px margin.
  o = run_cleaning(input, {rule("screen", "delete_fixations_outside", {})});
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 1u);
  o = run_cleaning(input, {rule("screen", "delete_fixations_outside", {{"margin_px", 300}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 0u);
  // Outside the text: fixations the region mapping placed on no region.
  auto mapped = input;
  auto& tr = mapped.participants[0].trials[0];
  tr.regions_mapped = true;
  for (std::size_t k = 0; k < tr.fixations.size(); ++k) tr.fixations[k].region = k == 4 ? -1 : 0;
  o = run_cleaning(mapped, {rule("text", "delete_fixations_outside", {}, {{"area", "text"}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 1u);
  EXPECT_THROW(run_cleaning(input, {rule("text", "delete_fixations_outside", {}, {{"area", "text"}})}), std::invalid_argument);
}

// The near-blink boundary, decided and documented in filters/fixation_filters.h
// (common practice, no source): a fixation goes when it ends *less than*
// within_ms before a blink starts or starts less than within_ms after one
// ends; exactly within_ms away it stays. Blink 1000-1200 ms, within 50 ms:
// ends at 950 (exactly 50 before): stays; ends at 951: goes; starts at 1250
// (exactly 50 after): stays; starts at 1249: goes.
TEST(FixationFilters, NearBlinkBoundaryIsExclusive) {
  std::uint32_t id = 0;
  auto t = trial_of({{750, 200, 0}, {751, 200, 1}, {1250, 100, 2}, {1249, 100, 3}}, id);
  t.blinks.push_back({"1", Eye::left, 1'000'000, 1'200'000});
  const auto o = run_cleaning(state_of({t}), {rule("blinks", "delete_fixations_near_blinks", {{"within_ms", 50}})});
  const auto& kept = o.state.participants[0].trials[0].fixations;
  EXPECT_TRUE(kept[0].kept);
  EXPECT_FALSE(kept[1].kept);
  EXPECT_TRUE(kept[2].kept);
  EXPECT_FALSE(kept[3].kept);
}

// The merge rule's two limits, as filters/merge_short_fixations.h states
// them: fixations *shorter than* max_duration_ms are merged (80 ms with an
// 80 ms limit is not), with *at most* max_gap_ms between them (a gap of
// exactly 50 ms with a 50 ms limit is merged). Worked by hand.
TEST(MergeShortFixations, DurationLimitIsStrictGapLimitIsNot) {
  std::uint32_t id = 0;
  const auto params = std::map<std::string, double>{{"max_duration_ms", 80}, {"max_distance_deg", 0.5}, {"max_gap_ms", 50}};
  // 80 ms, then 50 ms later 200 ms 0.4 deg away: 80 ms is not short.
  auto o = run_cleaning(state_of({trial_of({{0, 80, 10.0}, {130, 200, 10.4}}, id)}), {rule("m", "merge_short_fixations", params)});
  EXPECT_EQ(kept_durations(o), (std::vector<double>{80, 200}));
  // 60 ms ending at 60, the next starting at 110: a gap of exactly 50 ms, merged (60 + 200).
  id = 0;
  o = run_cleaning(state_of({trial_of({{0, 60, 10.0}, {110, 200, 10.4}}, id)}), {rule("m", "merge_short_fixations", params)});
  EXPECT_EQ(kept_durations(o), (std::vector<double>{260}));
}

// Outside the screen or a box (common practice, no source): the screen is
// width_px wide and height_px high (1920 x 1080 here), so x = 1500 px is on
// it; a box's margin widens it on every side. Positions: x_px = 960 + 40
// x_deg, y_px = 540 for every fixation of trial_of.
TEST(FixationFilters, ScreenWidthAndBoxMargins) {
  std::uint32_t id = 0;
  const auto input = state_of({trial_of({{0, 200, 13.5}, {300, 200, 0}}, id)});  // x = 1500 and 960 px
  auto o = run_cleaning(input, {rule("screen", "delete_fixations_outside", {})});
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 0u);
  // A box from y = 550 down: y = 540 is 10 px above it; a 20 px margin takes it in.
  const std::map<std::string, double> box{{"left_px", 0}, {"top_px", 550}, {"right_px", 1920}, {"bottom_px", 1000}};
  o = run_cleaning(input, {rule("box", "delete_fixations_outside", box, {{"area", "box"}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 2u);
  auto with_margin = box;
  with_margin["margin_px"] = 20;
  o = run_cleaning(input, {rule("box", "delete_fixations_outside", with_margin, {{"area", "box"}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 0u);
}

// A blink in a window after a marker (our rule, filters/trial_exclusions.h):
// the window [marker + from_ms, marker + to_ms) and a blink overlap when the
// blink starts before the window ends and ends after it starts; touching an
// edge is no overlap. Marker at 1000 ms, window 0-500 ms: a blink 1500-1600
// or 900-1000 leaves the trial; 1499-1600 excludes it.
TEST(TrialExclusions, ABlinkTouchingTheWindowIsOutsideIt) {
  std::uint32_t id = 0;
  auto with_blink = [&](Microseconds from, Microseconds to) {
    auto t = trial_of({{0, 200, 0}}, id);
    t.markers["text_shown"] = 1'000'000;
    t.blinks.push_back({"1", Eye::left, from, to});
    const auto o = run_cleaning(state_of({t}), {rule("window", "exclude_trials_with_gap_in_window", {{"from_ms", 0}, {"to_ms", 500}},
                                                     {{"marker", "text_shown"}, {"events", "blink"}})});
    return o.state.participants[0].trials[0].kept;
  };
  EXPECT_TRUE(with_blink(1'500'000, 1'600'000));
  EXPECT_TRUE(with_blink(900'000, 1'000'000));
  EXPECT_FALSE(with_blink(1'499'000, 1'600'000));
  EXPECT_FALSE(with_blink(900'000, 1'001'000));
}

TEST(TrialExclusions, EachKindByHand) {
  std::uint32_t id = 0;
  auto a = trial_of({{0, 200, 0}, {300, 200, 1}}, id);
  a.missing_samples = 251;  // 5.02 % of 5000
  auto b = trial_of({{0, 200, 0}, {300, 200, 1}, {600, 200, 2}}, id);
  b.missing_samples = 250;  // 5.00 %: not more than 5 %
  b.trial = "2";
  auto c = trial_of({{0, 200, 0}}, id);
  c.trial = "3";
  c.markers["text_shown"] = 1'000'000;
  c.blinks.push_back({"3", Eye::left, 1'400'000, 1'600'000});  // overlaps 1000..1500 ms
  auto d = trial_of({{0, 200, 0}, {300, 200, 1}}, id);
  d.trial = "4";
  d.markers["text_shown"] = 1'000'000;
  d.losses.emplace_back(1'100'000, 1'150'000);  // a loss, not a blink
  d.end_us = 12'000'000;                        // 12 s long
  const auto input = state_of({a, b, c, d});
  auto o = run_cleaning(input, {rule("loss", "exclude_trials_with_data_loss", {{"max_missing_percent", 5}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::trial), 1u);
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 2u);   // trial 1's two fixations go with it
  EXPECT_EQ(seq(o, 0, AuditLevel::sample), 5000u);  // and its samples
  o = run_cleaning(input, {rule("window", "exclude_trials_with_gap_in_window", {{"from_ms", 0}, {"to_ms", 500}},
                                {{"marker", "text_shown"}, {"events", "blink"}})});
  // Trial 3 (blink in the window) and trials 1, 2 (no text_shown marker) go; trial 4's loss is not a blink.
  EXPECT_EQ(seq(o, 0, AuditLevel::trial), 3u);
  EXPECT_TRUE(o.state.participants[0].trials[3].kept);
  o = run_cleaning(input, {rule("window", "exclude_trials_with_gap_in_window", {{"from_ms", 0}, {"to_ms", 500}},
                                {{"marker", "text_shown"}, {"events", "any"}})});
  EXPECT_FALSE(o.state.participants[0].trials[3].kept);
  o = run_cleaning(input, {rule("few", "exclude_trials_with_few_fixations", {{"min_fixations", 2}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::trial), 1u);  // trial 3 has one
  o = run_cleaning(input, {rule("long", "exclude_trials_by_duration", {{"max_duration_ms", 10000}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::trial), 1u);  // trial 4: 12 s
}

TEST(ParticipantExclusions, TrialLossAndVariable) {
  std::uint32_t id = 0;
  std::vector<CleanTrial> trials;
  for (int k = 0; k < 4; ++k) {
    auto t = trial_of({{0, 200, 0}}, id);
    t.trial = std::to_string(k + 1);
    t.variables["correct"] = k < 2 ? "1" : "0";  // mean 0.5
    t.missing_samples = k == 0 ? 4000 : 0;
    trials.push_back(t);
  }
  const auto input = state_of(trials);
  // One of four trials excluded = 25 %, which is not more than 25 %.
  auto o = run_cleaning(input, {rule("loss", "exclude_trials_with_data_loss", {{"max_missing_percent", 50}}),
                                rule("lost", "exclude_participants_by_trial_loss", {{"max_excluded_percent", 25}})});
  EXPECT_EQ(seq(o, 1, AuditLevel::participant), 0u);
  o = run_cleaning(input, {rule("loss", "exclude_trials_with_data_loss", {{"max_missing_percent", 50}}),
                           rule("lost", "exclude_participants_by_trial_loss", {{"max_excluded_percent", 20}})});
  EXPECT_EQ(seq(o, 1, AuditLevel::participant), 1u);
  EXPECT_EQ(seq(o, 1, AuditLevel::trial), 3u);  // the other three trials go with the participant
  EXPECT_EQ(alone(o, 1, AuditLevel::participant), 0u);  // alone, no trial was excluded before it
  o = run_cleaning(input, {rule("accuracy", "exclude_participants_by_variable", {{"min_mean", 0.7}}, {{"variable", "correct"}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::participant), 1u);
}

// Sequential and alone attribution on overlapping rules, worked by hand:
// durations 90, 120, 200; rule A deletes < 100, rule B deletes < 150.
// In order: A removes 90, B removes 120. Alone: A 1, B 2. Both alone: 1 (the 90).
TEST(Audit, SequentialAloneAndOverlap) {
  std::uint32_t id = 0;
  const auto input = state_of({trial_of({{0, 90, 0}, {200, 120, 1}, {400, 200, 2}}, id)});
  const auto o = run_cleaning(input, {rule("A", "delete_short_fixations", {{"min_duration_ms", 100}}),
                                      rule("B", "delete_short_fixations", {{"min_duration_ms", 150}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::fixation), 1u);
  EXPECT_EQ(seq(o, 1, AuditLevel::fixation), 1u);
  EXPECT_EQ(alone(o, 0, AuditLevel::fixation), 1u);
  EXPECT_EQ(alone(o, 1, AuditLevel::fixation), 2u);
  const auto& ov = o.report.overlap[static_cast<std::size_t>(AuditLevel::fixation)];
  EXPECT_EQ(ov[0][1], 1u);
  EXPECT_EQ(ov[1][0], 1u);
  EXPECT_EQ(ov[1][1], 2u);
  const auto& t = o.report.totals.at({"p1", "rare"});
  EXPECT_EQ(t.input[1], 3u);
  EXPECT_EQ(t.kept[1], 1u);
  EXPECT_NO_THROW(o.report.check_conservation());
}

// Random studies and rule lists for the properties below (invented data).
struct RandomStudies {
  std::mt19937 rng{1};
  std::uniform_real_distribution<double> dur{20, 1200}, x{-20, 20}, u{0, 1};
  const std::vector<CleaningRuleSpec> pool = {
      rule("m70", "merge_short_fixations", {{"max_duration_ms", 70}, {"max_distance_deg", 0.6}, {"max_gap_ms", 50}}),
      rule("m50", "merge_short_fixations", {{"max_duration_ms", 50}, {"max_distance_deg", 1.0}, {"max_gap_ms", 30}}),
      rule("short", "delete_short_fixations", {{"min_duration_ms", 80}}),
      rule("long", "delete_long_fixations", {{"max_duration_ms", 800}}),
      rule("blinks", "delete_fixations_near_blinks", {{"within_ms", 100}}),
      rule("screen", "delete_fixations_outside", {{"margin_px", 10}}),
      rule("loss", "exclude_trials_with_data_loss", {{"max_missing_percent", 10}}),
      rule("few", "exclude_trials_with_few_fixations", {{"min_fixations", 10}}),
      rule("dur", "exclude_trials_by_duration", {{"min_duration_ms", 1000}}),
      rule("lost", "exclude_participants_by_trial_loss", {{"max_excluded_percent", 30}}),
  };

  CleaningState study(int participants) {
    CleaningState s;
    s.screen = {1920, 1080, 531, 299, 700};
    std::uint32_t fid = 0, tid = 0;
    for (int p = 0; p < participants; ++p) {
      CleanParticipant cp;
      cp.id = static_cast<std::uint32_t>(p);
      cp.participant = "p" + std::to_string(p);
      for (int k = 0; k < 6; ++k) {
        std::vector<F> fs;
        double t = 0;
        for (int i = 0; i < 12; ++i) {
          const double d = dur(rng);
          fs.push_back({t, d, x(rng)});
          t += d + 30;
        }
        CleanTrial tr = trial_of(fs, fid, k % 2 ? "rare" : "frequent");
        tr.id = tid++;
        tr.participant = cp.participant;
        tr.missing_samples = static_cast<std::uint64_t>(u(rng) * 1000);
        tr.end_us = static_cast<Microseconds>(u(rng) * 3e6);
        if (u(rng) < 0.5) tr.blinks.push_back({"1", Eye::left, 1'000'000, 1'200'000});
        cp.trials.push_back(tr);
      }
      s.participants.push_back(cp);
    }
    return s;
  }

  std::vector<CleaningRuleSpec> rules() {
    std::vector<CleaningRuleSpec> out;
    for (const auto& r : pool) {
      if (u(rng) < 0.6) out.push_back(r);
    }
    std::shuffle(out.begin(), out.end(), rng);
    return out;
  }
};

// input = kept + sum of removed at every level, for random rule lists on random data.
TEST(Audit, ConservationHoldsForRandomRuleLists) {
  RandomStudies random;
  for (int round = 0; round < 30; ++round) {
    const CleaningState s = random.study(3);
    const auto o = run_cleaning(s, random.rules());  // run_cleaning checks conservation itself and throws if it fails
    EXPECT_NO_THROW(o.report.check_conservation());
  }
}

// Every rule judges a participant by that participant's own trials (a
// property of the rules as specified: none compares participants), so
// cleaning one participant at a time must give exactly what cleaning the
// whole study at once gives: the same audit (its overlap counts summed), the
// same removals by id and the same state, for random rule lists.
TEST(Audit, ParticipantByParticipantIsTheWholeStudy) {
  RandomStudies random;
  for (int round = 0; round < 30; ++round) {
    const CleaningState s = random.study(4);
    const auto rules = random.rules();
    const CleaningOutcome whole = run_cleaning(s, rules);
    std::size_t next = 0;
    std::vector<CleaningOutcome> parts;
    const AuditReport audit = run_cleaning_by_participant(
        [&](CleaningState& one) {
          if (next == s.participants.size()) return false;
          one.screen = s.screen;
          one.factors = s.factors;
          one.participants.push_back(s.participants[next++]);
          return true;
        },
        rules, s.factors, [&](CleaningOutcome&& part) { parts.push_back(std::move(part)); });
    ASSERT_EQ(parts.size(), s.participants.size());
    EXPECT_EQ(audit.rules, whole.report.rules);
    EXPECT_EQ(audit.totals.size(), whole.report.totals.size());
    for (const auto& [group, t] : whole.report.totals) {
      EXPECT_EQ(audit.totals.at(group).input, t.input);
      EXPECT_EQ(audit.totals.at(group).kept, t.kept);
    }
    for (auto which : {&AuditReport::sequential, &AuditReport::alone}) {
      ASSERT_EQ((audit.*which).size(), (whole.report.*which).size());
      for (const auto& [key, c] : whole.report.*which) {
        EXPECT_EQ((audit.*which).at(key).removed, c.removed) << key.rule << " " << key.participant << " " << key.cell;
        EXPECT_EQ((audit.*which).at(key).merged, c.merged);
      }
    }
    EXPECT_EQ(audit.overlap, whole.report.overlap) << "round " << round;
    std::map<std::uint32_t, std::pair<std::size_t, std::string>> fixations, trials;
    for (std::size_t p = 0; p < parts.size(); ++p) {
      fixations.insert(parts[p].fixation_removals.begin(), parts[p].fixation_removals.end());
      trials.insert(parts[p].trial_removals.begin(), parts[p].trial_removals.end());
      const CleanParticipant& a = parts[p].state.participants.at(0);
      const CleanParticipant& b = whole.state.participants[p];
      EXPECT_EQ(a.kept, b.kept);
      ASSERT_EQ(a.trials.size(), b.trials.size());
      for (std::size_t t = 0; t < a.trials.size(); ++t) {
        EXPECT_EQ(a.trials[t].kept, b.trials[t].kept);
        ASSERT_EQ(a.trials[t].fixations.size(), b.trials[t].fixations.size());
        for (std::size_t f = 0; f < a.trials[t].fixations.size(); ++f) {
          const CleanFixation &fa = a.trials[t].fixations[f], &fb = b.trials[t].fixations[f];
          EXPECT_EQ(fa.id, fb.id);
          EXPECT_EQ(fa.kept, fb.kept);
          EXPECT_EQ(fa.duration_ms, fb.duration_ms);
          EXPECT_EQ(fa.merged_into, fb.merged_into);
        }
      }
    }
    EXPECT_EQ(fixations, whole.fixation_removals);
    EXPECT_EQ(trials, whole.trial_removals);
  }
  // No participant at all: the rules, nothing removed.
  const auto rules = random.rules();
  const AuditReport none = run_cleaning_by_participant([](CleaningState&) { return false; }, rules, {}, [](CleaningOutcome&&) {});
  EXPECT_EQ(none.rules.size(), rules.size());
  EXPECT_TRUE(none.totals.empty());
}

TEST(CleaningRules, BadParametersNameTheProblem) {
  auto error = [](const CleaningRuleSpec& s) {
    try {
      make_cleaning_rule(s);
    } catch (const RuleParameterError& e) {
      return std::string(e.what()) + " [" + e.key + "]";
    }
    return std::string("no error");
  };
  EXPECT_NE(error(rule("x", "delete_tiny", {})).find("unknown rule kind \"delete_tiny\""), std::string::npos);
  EXPECT_NE(error(rule("x", "delete_short_fixations", {})).find("rule 'x' (delete_short_fixations): required parameter min_duration_ms is missing"), std::string::npos);
  EXPECT_NE(error(rule("x", "delete_short_fixations", {{"min_duration", 80}})).find("parameter min_duration needs its unit in the name, e.g. min_duration_ms [min_duration]"), std::string::npos);
  EXPECT_NE(error(rule("x", "delete_short_fixations", {{"min_duration_ms", -5}})).find("must be at least 0"), std::string::npos);
  EXPECT_NE(error(rule("x", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_gap_ms", 50}})).find("exactly one of max_distance_deg"), std::string::npos);
  // Every threshold is the lab's to write (no built-in value): the gap limit too.
  EXPECT_NE(error(rule("x", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_deg", 0.5}})).find("max_gap_ms"), std::string::npos);
  EXPECT_NE(error(rule("x", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_deg", 0.5}, {"max_gap_ms", 50}}, {{"prefer", "left"}})).find("must be one of \"nearer\""), std::string::npos);
  EXPECT_NE(error(rule("x", "exclude_trials_with_data_loss", {{"max_missing_percent", 140}})).find("at most 100"), std::string::npos);
  // A misspelt name is reported as such, not as a missing one (a newcomer's trial: common practice, no source).
  EXPECT_NE(error(rule("x", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_deg", 0.5}, {"max_gapms", 50}}))
                .find("unknown parameter max_gapms; did you mean max_gap_ms? [max_gapms]"),
            std::string::npos);
  EXPECT_NE(error(rule("x", "exclude_participants_by_variable", {{"min_mean", 0.7}}, {{"varaible", "correct"}})).find("did you mean variable?"),
            std::string::npos);
  // Limits no trial could meet at once.
  EXPECT_NE(error(rule("x", "exclude_trials_by_duration", {{"min_duration_ms", 8000}, {"max_duration_ms", 500}}))
                .find("max_duration_ms must be above min_duration_ms, or no trial could be kept [max_duration_ms]"),
            std::string::npos);
  EXPECT_EQ(error(rule("x", "exclude_trials_by_duration", {{"min_duration_ms", 500}, {"max_duration_ms", 8000}})), "no error");
}

// Region rules, by hand. Regions (0-based) of the fixations, in time order:
// trial 1: 0, 1, 3, 2, 4  -> region 3 ("target" here, index 2) skipped in first pass
// trial 2: 0, 1, 2, 2, 3  -> target read in first pass from the third fixation until the
//          fifth starts; a blink between the fourth and the fifth falls in that window
// trial 3: 1, 2, 3        -> no fixation on the first region
TEST(RegionExclusions, FirstPassGapSkippingAndFirstRegion) {
  std::uint32_t id = 0;
  auto make = [&](const std::string& name, std::vector<int> regions) {
    std::vector<F> fs;
    for (std::size_t k = 0; k < regions.size(); ++k) fs.push_back({200.0 * static_cast<double>(k), 180, 0});
    CleanTrial t = trial_of(fs, id);
    t.trial = name;
    for (std::size_t k = 0; k < regions.size(); ++k) t.fixations[k].region = regions[k];
    t.regions_mapped = true;
    t.region_roles["target"] = 2;
    return t;
  };
  auto t1 = make("1", {0, 1, 3, 2, 4});
  auto t2 = make("2", {0, 1, 2, 2, 3});
  t2.blinks.push_back({"2", Eye::left, 700'000, 790'000});  // fourth fixation ends at 780 ms, fifth starts at 800 ms
  auto t3 = make("3", {1, 2, 3});
  const auto input = state_of({t1, t2, t3});
  auto o = run_cleaning(input, {rule("skip", "exclude_trials_skipping_region", {}, {{"role", "target"}})});
  EXPECT_FALSE(o.state.participants[0].trials[0].kept);
  EXPECT_TRUE(o.state.participants[0].trials[1].kept);
  EXPECT_TRUE(o.state.participants[0].trials[2].kept);
  o = run_cleaning(input, {rule("blink", "exclude_trials_with_gap_in_first_pass", {}, {{"role", "target"}, {"events", "blink"}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::trial), 1u);
  EXPECT_FALSE(o.state.participants[0].trials[1].kept);
  o = run_cleaning(input, {rule("blink", "exclude_trials_with_gap_in_first_pass", {{"region", 2}}, {{"events", "blink"}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::trial), 0u);  // region 2 (index 1) has no blink in its first pass
  o = run_cleaning(input, {rule("first", "exclude_trials_without_first_region", {})});
  EXPECT_EQ(seq(o, 0, AuditLevel::trial), 1u);
  EXPECT_FALSE(o.state.participants[0].trials[2].kept);
  // Without regions mapped, the rule says what it needs.
  auto plain = input;
  for (auto& t : plain.participants[0].trials) t.regions_mapped = false;
  EXPECT_THROW(run_cleaning(plain, {rule("first", "exclude_trials_without_first_region", {})}), std::invalid_argument);
}

// First-pass reading, as filters/region_exclusions.h defines it for these
// rules (after measures/reading_measures.h): a region is skipped in first
// pass when any region *further on* was fixated before it, not only the one
// just before; and its first pass lasts until the next fixation after the
// run starts, so a blink in the saccade that leaves the region counts.
// Fixations every 200 ms lasting 180 ms, worked by hand:
//  - regions 0, 3, 1, 2, 4: region 2 (the target) comes after region 3:
//    skipped, although the fixation just before it is on region 1;
//  - regions 0, 1, 2, 2, 3: the target's first pass is fixations 2-3,
//    400-780 ms, and lasts until fixation 4 starts at 800 ms; a blink at
//    785-795 ms falls in it.
TEST(RegionExclusions, SkippedAfterAnyFurtherRegionAndTheExitSaccadeCounts) {
  std::uint32_t id = 0;
  auto make = [&](const std::string& name, std::vector<int> regions) {
    std::vector<F> fs;
    for (std::size_t k = 0; k < regions.size(); ++k) fs.push_back({200.0 * static_cast<double>(k), 180, 0});
    CleanTrial t = trial_of(fs, id);
    t.trial = name;
    for (std::size_t k = 0; k < regions.size(); ++k) t.fixations[k].region = regions[k];
    t.regions_mapped = true;
    t.region_roles["target"] = 2;
    return t;
  };
  auto o = run_cleaning(state_of({make("1", {0, 3, 1, 2, 4})}), {rule("skip", "exclude_trials_skipping_region", {}, {{"role", "target"}})});
  EXPECT_FALSE(o.state.participants[0].trials[0].kept);
  auto t = make("2", {0, 1, 2, 2, 3});
  t.blinks.push_back({"2", Eye::left, 785'000, 795'000});
  o = run_cleaning(state_of({t}), {rule("blink", "exclude_trials_with_gap_in_first_pass", {}, {{"role", "target"}, {"events", "blink"}})});
  EXPECT_FALSE(o.state.participants[0].trials[0].kept);
}

// A trial whose item has no such region (a passage without a target, an
// item of three regions asked for region 5) cannot skip it: the rule does not
// judge it, as the first-pass gap rule does not (a newcomer's trial: every
// passage trial of a study was excluded as "skipped"; common practice, no source).
TEST(RegionExclusions, ATrialWithoutTheRegionIsNotJudgedSkipped) {
  std::uint32_t id = 0;
  CleanTrial passage = trial_of({{0, 180, 0}, {200, 180, 0}, {400, 180, 0}}, id);
  passage.trial = "passage";
  for (std::size_t k = 0; k < 3; ++k) passage.fixations[k].region = static_cast<int>(k);
  passage.regions_mapped = true;
  passage.region_count = 3;  // no role "target"
  const auto input = state_of({passage});
  auto o = run_cleaning(input, {rule("skip", "exclude_trials_skipping_region", {}, {{"role", "target"}})});
  EXPECT_TRUE(o.state.participants[0].trials[0].kept);
  o = run_cleaning(input, {rule("skip", "exclude_trials_skipping_region", {{"region", 5}}, {})});
  EXPECT_TRUE(o.state.participants[0].trials[0].kept);
  o = run_cleaning(input, {rule("skip", "exclude_trials_skipping_region", {{"region", 3}}, {})});
  EXPECT_TRUE(o.state.participants[0].trials[0].kept);  // read in order: region 3 not skipped
  CleanTrial skipping = passage;
  skipping.fixations[1].region = 2;  // 0, 2, 2: region 2 (index 1) skipped
  o = run_cleaning(state_of({skipping}), {rule("skip", "exclude_trials_skipping_region", {{"region", 2}}, {})});
  EXPECT_FALSE(o.state.participants[0].trials[0].kept);
}

// A participant's mean of a trial variable *below* min_mean excludes them
// (filters/participant_exclusions.h); exactly min_mean does not. Four
// trials, correct 1, 1, 0, 0: mean 0.5, with min_mean 0.5: kept.
TEST(ParticipantExclusions, AMeanOfExactlyTheMinimumStays) {
  std::uint32_t id = 0;
  std::vector<CleanTrial> trials;
  for (int k = 0; k < 4; ++k) {
    auto t = trial_of({{0, 200, 0}}, id);
    t.trial = std::to_string(k + 1);
    t.variables["correct"] = k < 2 ? "1" : "0";
    trials.push_back(t);
  }
  const auto o = run_cleaning(state_of(trials), {rule("accuracy", "exclude_participants_by_variable", {{"min_mean", 0.5}}, {{"variable", "correct"}})});
  EXPECT_EQ(seq(o, 0, AuditLevel::participant), 0u);
}

// A rule that cannot apply to the data (a variable that is no number) names
// itself: the engine says which rule, so the message can give its name and
// line (a newcomer's trial; common practice, no source).
TEST(ParticipantExclusions, AVariableThatIsNoNumberNamesTheRule) {
  std::uint32_t id = 0;
  auto t = trial_of({{0, 200, 0}}, id);
  t.trial = "4";
  t.variables["block"] = "sentence";
  try {
    run_cleaning(state_of({t}), {rule("short", "delete_short_fixations", {{"min_duration_ms", 80}}),
                                 rule("accuracy", "exclude_participants_by_variable", {{"min_mean", 0.5}}, {{"variable", "block"}})});
    FAIL() << "a variable that is no number passed";
  } catch (const RuleApplyError& e) {
    EXPECT_EQ(e.rule, 1u);
    EXPECT_NE(std::string(e.what()).find("trial 4 is not a number: \"sentence\""), std::string::npos) << e.what();
  }
}
