#pragma once
// Hand-made cleaning inputs shared by the cleaning tests: one participant's
// trials of fixations given by start, duration and horizontal position.

#include <map>
#include <string>
#include <vector>

#include "filters/cleaning_engine.h"

namespace gazemill::cleaning_test {

// A fixation: start and duration in ms, horizontal position in deg (1 deg = 40 px here).
struct F {
  double start_ms, duration_ms, x_deg;
};

inline CleanTrial trial_of(const std::vector<F>& fixations, std::uint32_t& next_id, const std::string& condition = "rare") {
  CleanTrial t;
  t.participant = "p1";
  t.recording = "p1_1";
  t.trial = "1";
  t.cell = condition;
  t.start_us = 0;
  t.end_us = 5'000'000;
  t.samples = 5000;
  for (const auto& f : fixations) {
    CleanFixation c;
    c.id = next_id++;
    c.fixation.start_us = static_cast<Microseconds>(f.start_ms * 1000);
    c.fixation.end_us = static_cast<Microseconds>((f.start_ms + f.duration_ms) * 1000);
    c.fixation.x_deg = f.x_deg;
    c.fixation.x_px = 960 + 40 * f.x_deg;
    c.fixation.y_px = 540;
    c.duration_ms = f.duration_ms;
    t.fixations.push_back(c);
  }
  return t;
}

inline CleaningState state_of(std::vector<CleanTrial> trials) {
  CleaningState s;
  s.screen = {1920, 1080, 531, 299, 700};
  CleanParticipant p;
  p.participant = "p1";
  std::uint32_t tid = 0;
  for (auto& t : trials) t.id = tid++;
  p.trials = std::move(trials);
  s.participants.push_back(std::move(p));
  return s;
}

inline CleaningRuleSpec rule(const std::string& name, const std::string& kind, std::map<std::string, double> numbers,
                      std::map<std::string, std::string> texts = {}) {
  return {name, kind, std::move(numbers), std::move(texts), 0, {}};
}

inline std::vector<double> kept_durations(const CleaningOutcome& o) {
  std::vector<double> d;
  for (const auto& t : o.state.participants[0].trials) {
    for (const auto& f : t.fixations) {
      if (f.kept) d.push_back(f.duration_ms);
    }
  }
  return d;
}

}  // namespace gazemill::cleaning_test
