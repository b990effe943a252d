// Cleaning rules in the cases the mutation check (scripts/mutants,
// tests/mutants/catalogue.tsv) found untested: rules that run after another
// rule removed fixations, merges of a fixation that had itself absorbed one,
// the merge distance in pixels on both axes, and the first-pass window's
// end. Every expected value is worked by hand beside its check, from the
// rule's definition in its header; none is taken from the code.

#include <gtest/gtest.h>

#include "filters/cleaning_engine.h"
#include "tests/cleaning_helpers.h"

using namespace gazemill;
using namespace gazemill::cleaning_test;

// Rules run in order on one state (filters/cleaning_engine.h): a trial rule
// after a fixation rule counts only the fixations still kept. By hand:
// durations 50, 200, 200 ms; "short" (< 80 ms) removes the 50 ms one, which
// leaves 2 fixations; "few" (fewer than 3) then excludes the trial. Alone,
// "few" sees 3 fixations and keeps it.
TEST(MutantCatches, FewFixationsCountsOnlyTheFixationsStillKept) {
  std::uint32_t id = 0;
  const auto input = state_of({trial_of({{0, 50, 0}, {100, 200, 1}, {400, 200, 2}}, id)});
  const auto o = run_cleaning(input, {rule("short", "delete_short_fixations", {{"min_duration_ms", 80}}),
                                      rule("few", "exclude_trials_with_few_fixations", {{"min_fixations", 3}})});
  EXPECT_FALSE(o.state.participants[0].trials[0].kept);
  const auto alone = run_cleaning(input, {rule("few", "exclude_trials_with_few_fixations", {{"min_fixations", 3}})});
  EXPECT_TRUE(alone.state.participants[0].trials[0].kept);
}

// Region rules judge first pass from the kept fixations
// (filters/region_exclusions.h, after measures/reading_measures.h: a region
// is skipped when a region further on was fixated before it). Regions in
// time order 0, 3, 2, 3 with the target = region index 2; the fixation on
// region 3 before the target lasts 50 ms. After "short" (< 80 ms) removes
// it, the kept regions are 0, 2, 3: the target is read in first pass and the
// trial stays. Without "short", region 3 came first: skipped, excluded.
TEST(MutantCatches, SkippingIsJudgedFromTheKeptFixations) {
  std::uint32_t id = 0;
  auto t = trial_of({{0, 200, 0}, {250, 50, 1}, {350, 200, 2}, {600, 200, 3}}, id);
  const int regions[] = {0, 3, 2, 3};
  for (std::size_t k = 0; k < 4; ++k) t.fixations[k].region = regions[k];
  t.regions_mapped = true;
  t.region_roles["target"] = 2;
  const auto input = state_of({t});
  const auto o = run_cleaning(input, {rule("short", "delete_short_fixations", {{"min_duration_ms", 80}}),
                                      rule("skip", "exclude_trials_skipping_region", {}, {{"role", "target"}})});
  EXPECT_TRUE(o.state.participants[0].trials[0].kept);
  const auto alone = run_cleaning(input, {rule("skip", "exclude_trials_skipping_region", {}, {{"role", "target"}})});
  EXPECT_FALSE(alone.state.participants[0].trials[0].kept);
}

// First-pass reading of a region lasts until the next fixation after the
// run starts (filters/region_exclusions.h): the window is [start of the
// run, start of the next fixation), and touching its end is no overlap, as
// for the marker windows (TrialExclusions.ABlinkTouchingTheWindowIsOutsideIt;
// common practice, no source). Regions 0, 1, 2, 2, 3, fixations every 200
// ms lasting 180 ms: the target (index 2) is read from 400 ms until the
// fifth fixation starts at 800 ms. A blink 800-850 ms starts exactly at the
// end: the trial stays; one 799-850 ms overlaps by 1 ms: excluded.
TEST(MutantCatches, ABlinkStartingAsTheNextFixationStartsIsAfterFirstPass) {
  auto excluded = [](Microseconds from, Microseconds to) {
    std::uint32_t id = 0;
    std::vector<F> fs;
    for (int k = 0; k < 5; ++k) fs.push_back({200.0 * k, 180, 0});
    auto t = trial_of(fs, id);
    const int regions[] = {0, 1, 2, 2, 3};
    for (std::size_t k = 0; k < 5; ++k) t.fixations[k].region = regions[k];
    t.regions_mapped = true;
    t.region_roles["target"] = 2;
    t.blinks.push_back({"1", Eye::left, from, to});
    const auto o = run_cleaning(state_of({t}), {rule("blink", "exclude_trials_with_gap_in_first_pass", {}, {{"role", "target"}, {"events", "blink"}})});
    return !o.state.participants[0].trials[0].kept;
  };
  EXPECT_FALSE(excluded(800'000, 850'000));
  EXPECT_TRUE(excluded(799'000, 850'000));
}

// The merge distance in pixels is the straight-line distance
// (filters/merge_short_fixations.h; common practice, no source): a 60 ms
// fixation and a 200 ms one at the same x, 60 px apart vertically, are 60 px
// apart: more than a 30 px limit, no merge. 20 px apart vertically: merged,
// 60 + 200 = 260 ms.
TEST(MutantCatches, MergeDistanceInPixelsCountsTheVerticalToo) {
  auto merged = [](double dy_px) {
    std::uint32_t id = 0;
    auto t = trial_of({{0, 60, 10.0}, {90, 200, 10.0}}, id);
    t.fixations[1].fixation.y_px += dy_px;
    const auto o = run_cleaning(state_of({t}), {rule("m", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_px", 30}, {"max_gap_ms", 50}})});
    return kept_durations(o);
  };
  EXPECT_EQ(merged(60), (std::vector<double>{60, 200}));
  EXPECT_EQ(merged(20), (std::vector<double>{260}));
}

// A short fixation that absorbed another and is still short is merged in
// turn, and the fixation it joins then stands for all three inputs
// (merged_count: "input fixations it now stands for", pipeline/cleaning_state.h).
// By hand, limits 80 ms, 0.5 deg, 50 ms gap: A 20 ms at 10.0 deg (0-20 ms),
// B 50 ms at 10.1 (40-90 ms), C 300 ms at 10.2 (110-410 ms). A is short, its
// only neighbour B is longer, 0.1 deg and 20 ms away: A joins B, which
// becomes 70 ms (durations summed), 0-90 ms, standing for 2. B is still
// short (70 < 80); its kept neighbour C is longer, 0.1 deg and 20 ms away:
// B joins C: 370 ms, standing for 1 + 2 = 3.
TEST(MutantCatches, AChainOfMergesCountsEveryInputFixation) {
  std::uint32_t id = 0;
  const auto input = state_of({trial_of({{0, 20, 10.0}, {40, 50, 10.1}, {110, 300, 10.2}}, id)});
  const auto o = run_cleaning(input, {rule("m", "merge_short_fixations", {{"max_duration_ms", 80}, {"max_distance_deg", 0.5}, {"max_gap_ms", 50}})});
  EXPECT_EQ(kept_durations(o), (std::vector<double>{370}));
  const auto& c = o.state.participants[0].trials[0].fixations[2];
  EXPECT_EQ(c.merged_count, 3u);
  EXPECT_EQ(c.fixation.start_us, 0);
  EXPECT_EQ(c.fixation.end_us, 410'000);
}
