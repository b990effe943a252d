// Cleaning speed: a 40-participant x 120-trial study's fixations (about 30 a
// trial) through the usual rule list, the audit with every rule also applied
// alone. Prints the figure measured in this run.

#include <chrono>
#include <cstdio>
#include <random>

#include "filters/cleaning_engine.h"

using namespace gazemill;

int main() {
  std::mt19937 rng(4);
  std::uniform_real_distribution<double> dur(30, 900), x(-15, 15), u(0, 1);
  CleaningState s;
  s.screen = {1920, 1080, 531, 299, 700};
  std::uint32_t fid = 0, tid = 0;
  for (int p = 0; p < 40; ++p) {
    CleanParticipant cp;
    cp.id = static_cast<std::uint32_t>(p);
    cp.participant = "p" + std::to_string(p);
    for (int k = 0; k < 120; ++k) {
      CleanTrial t;
      t.id = tid++;
      t.participant = cp.participant;
      t.trial = std::to_string(k + 1);
      t.cell = k % 2 ? "rare" : "frequent";
      t.samples = 6000;
      t.missing_samples = static_cast<std::uint64_t>(u(rng) * 600);
      t.markers["text_shown"] = 300000;
      t.end_us = 6'000'000;
      if (u(rng) < 0.3) t.blinks.push_back({t.trial, Eye::left, 2'000'000, 2'200'000});
      Microseconds now = 300000;
      for (int i = 0; i < 30; ++i) {
        CleanFixation f;
        f.id = fid++;
        f.duration_ms = dur(rng);
        f.fixation.start_us = now;
        f.fixation.end_us = now + static_cast<Microseconds>(f.duration_ms * 1000);
        f.fixation.x_deg = x(rng);
        f.fixation.x_px = 960 + 44 * f.fixation.x_deg;
        f.fixation.y_px = 500;
        now = f.fixation.end_us + 30000;
        t.fixations.push_back(f);
      }
      cp.trials.push_back(t);
    }
    s.participants.push_back(cp);
  }
  auto rule = [](std::string name, std::string kind, std::map<std::string, double> n, std::map<std::string, std::string> t = {}) {
    return CleaningRuleSpec{std::move(name), std::move(kind), std::move(n), std::move(t), 0, {}};
  };
  const std::vector<CleaningRuleSpec> rules = {
      rule("merge 70", "merge_short_fixations", {{"max_duration_ms", 70}, {"max_distance_deg", 0.6}, {"max_gap_ms", 50}}),
      rule("merge 50", "merge_short_fixations", {{"max_duration_ms", 50}, {"max_distance_deg", 1.0}, {"max_gap_ms", 30}}),
      rule("short", "delete_short_fixations", {{"min_duration_ms", 80}}),
      rule("long", "delete_long_fixations", {{"max_duration_ms", 800}}),
      rule("blinks", "delete_fixations_near_blinks", {{"within_ms", 50}}),
      rule("screen", "delete_fixations_outside", {}),
      rule("loss", "exclude_trials_with_data_loss", {{"max_missing_percent", 8}}),
      rule("window", "exclude_trials_with_gap_in_window", {{"from_ms", 0}, {"to_ms", 2000}}, {{"marker", "text_shown"}}),
      rule("few", "exclude_trials_with_few_fixations", {{"min_fixations", 10}}),
      rule("lost", "exclude_participants_by_trial_loss", {{"max_excluded_percent", 30}}),
  };
  double best = 1e300;
  CleaningOutcome o;
  for (int r = 0; r < 3; ++r) {
    const auto t0 = std::chrono::steady_clock::now();
    o = run_cleaning(s, rules);
    best = std::min(best, std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
  }
  std::printf("cleaning 40 participants x 120 trials, %u fixations, %zu rules (sequential + each alone + overlap + conservation check): %.3f s (best of 3)\n",
              fid, rules.size(), best);
  return 0;
}
