#include "filters/trial_exclusions.h"

#include <fmt/format.h>

namespace gazemill {
void ExcludeTrialsWithDataLoss::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_trial(state, [&](CleanTrial& t) {
    const double percent = t.samples ? 100.0 * static_cast<double>(t.missing_samples) / static_cast<double>(t.samples) : 100.0;
    if (percent > max_percent_) remove_trial(t, rule, fmt::format("{:.1f} % of samples missing > {:g} %", percent, max_percent_), channel);
  });
}

void ExcludeTrialsWithFewFixations::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_trial(state, [&](CleanTrial& t) {
    std::size_t n = 0;
    for (const auto& f : t.fixations) n += f.kept;
    if (static_cast<double>(n) < min_) remove_trial(t, rule, fmt::format("{} fixations < {:g}", n, min_), channel);
  });
}

void ExcludeTrialsByDuration::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_trial(state, [&](CleanTrial& t) {
    const double ms = static_cast<double>(t.end_us - t.start_us) / 1000.0;
    if (min_ms_ > 0 && ms < min_ms_) remove_trial(t, rule, fmt::format("{:.0f} ms < {:g} ms", ms, min_ms_), channel);
    else if (max_ms_ > 0 && ms > max_ms_) remove_trial(t, rule, fmt::format("{:.0f} ms > {:g} ms", ms, max_ms_), channel);
  });
}

void ExcludeTrialsWithGapInWindow::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_trial(state, [&](CleanTrial& t) {
    Microseconds anchor = t.start_us;
    if (marker_ != "trial_start") {
      auto it = t.markers.find(marker_);
      if (it == t.markers.end()) {
        remove_trial(t, rule, "marker " + marker_ + " missing", channel);
        return;
      }
      anchor = it->second;
    }
    const Microseconds a = anchor + static_cast<Microseconds>(from_ms_ * 1000.0);
    const Microseconds b = anchor + static_cast<Microseconds>(to_ms_ * 1000.0);
    auto overlaps = [&](Microseconds s, Microseconds e) { return s < b && e > a; };
    bool hit = false;
    if (events_ != "loss") {
      for (const auto& bl : t.blinks) hit = hit || overlaps(bl.start_us, bl.end_us);
    }
    if (events_ != "blink") {
      for (const auto& [s, e] : t.losses) hit = hit || overlaps(s, e);
    }
    if (hit) remove_trial(t, rule, fmt::format("{} within {:g}..{:g} ms of {}", events_ == "any" ? "blink or loss" : events_, from_ms_, to_ms_, marker_), channel);
  });
}

}  // namespace gazemill
