#include "filters/participant_exclusions.h"

#include <fmt/format.h>

#include <charconv>

namespace gazemill {

void ExcludeParticipantsByTrialLoss::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for (auto& p : state.participants) {
    if (!p.kept || p.trials.empty()) continue;
    std::size_t excluded = 0;
    for (const auto& t : p.trials) excluded += !t.kept;
    const double percent = 100.0 * static_cast<double>(excluded) / static_cast<double>(p.trials.size());
    if (percent > max_percent_) {
      remove_participant(p, rule, fmt::format("{:.1f} % of trials excluded > {:g} %", percent, max_percent_), channel);
    }
  }
}

void ExcludeParticipantsByVariable::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for (auto& p : state.participants) {
    if (!p.kept) continue;
    double sum = 0;
    std::size_t n = 0;
    for (const auto& t : p.trials) {
      auto it = t.variables.find(variable_);
      if (it == t.variables.end()) continue;
      double v = 0;
      const auto r = std::from_chars(it->second.data(), it->second.data() + it->second.size(), v);
      if (r.ec != std::errc() || r.ptr != it->second.data() + it->second.size()) {
        throw std::invalid_argument("trial variable " + variable_ + " of participant " + p.participant + ", trial " + t.trial +
                                    " is not a number: \"" + it->second + "\"");
      }
      sum += v;
      ++n;
    }
    if (n == 0) {
      remove_participant(p, rule, "no trial has the variable " + variable_, channel);
    } else if (sum / static_cast<double>(n) < min_mean_) {
      remove_participant(p, rule, fmt::format("mean {} {:.3f} < {:g}", variable_, sum / static_cast<double>(n), min_mean_), channel);
    }
  }
}

}  // namespace gazemill
