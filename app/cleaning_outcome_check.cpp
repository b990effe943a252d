#include "app/cleaning_outcome_check.h"

#include <spdlog/spdlog.h>

#include <array>
#include <cstdint>
#include <string>
#include <vector>

#include "pipeline/input_error.h"

namespace gazemill {

void check_cleaning_outcome(const Protocol& protocol, const AuditReport& audit) {
  std::array<std::uint64_t, kAuditLevels> input{}, kept{};
  for (const auto& [group, t] : audit.totals) {
    for (std::size_t l = 0; l < kAuditLevels; ++l) {
      input[l] += t.input[l];
      kept[l] += t.kept[l];
    }
  }
  const auto fixation = static_cast<std::size_t>(AuditLevel::fixation), trial = static_cast<std::size_t>(AuditLevel::trial),
             participant = static_cast<std::size_t>(AuditLevel::participant);
  const bool most_trials = input[trial] > 0 && 2 * kept[trial] < input[trial];
  const bool most_fixations = input[fixation] > 0 && 2 * kept[fixation] < input[fixation];
  if (!most_trials && !most_fixations) return;

  // Per rule, in protocol order: fixations, trials and participants removed first by it, and by it alone.
  std::vector<AuditCounts> first(audit.rules.size()), alone(audit.rules.size());
  for (const auto& [key, c] : audit.sequential) {
    if (key.rule >= first.size()) continue;
    for (std::size_t l = 0; l < kAuditLevels; ++l) first[key.rule].removed[l] += c.removed[l];
  }
  for (const auto& [key, c] : audit.alone) {
    if (key.rule >= alone.size()) continue;
    for (std::size_t l = 0; l < kAuditLevels; ++l) alone[key.rule].removed[l] += c.removed[l];
  }
  std::string rules;
  for (std::size_t r = 0; r < audit.rules.size(); ++r) {
    for (const std::size_t l : {fixation, trial, participant}) {
      if (first[r].removed[l] == 0 && alone[r].removed[l] == 0) continue;
      rules += "\n  rule " + std::to_string(r + 1) + " '" + audit.rules[r] + "' removed " + std::to_string(first[r].removed[l]) + " " +
               to_string(static_cast<AuditLevel>(l)) + (first[r].removed[l] == 1 ? "" : "s") + " (" + std::to_string(alone[r].removed[l]) + " when applied alone)";
    }
  }
  const std::string counts = std::to_string(kept[fixation]) + " of " + std::to_string(input[fixation]) + " fixations and " +
                             std::to_string(kept[trial]) + " of " + std::to_string(input[trial]) + " trials";
  if ((input[trial] > 0 && kept[trial] == 0) || (input[fixation] > 0 && kept[fixation] == 0)) {
    throw InputError({protocol.path, 0, "cleaning"}, "the cleaning rules keep " + counts +
                                                          ": nothing to measure; are their values in the units their names give?" + rules);
  }
  spdlog::warn("{}: the cleaning rules keep only {}:{}", protocol.path, counts, rules);
}

}  // namespace gazemill
