#pragma once
// Participant-level exclusions. An excluded participant takes their remaining
// trials, fixations and samples with them (counted for the same rule).

#include <string>

#include "filters/cleaning_rule.h"

namespace gazemill {

/// Excludes a participant when more than max_excluded_percent of their trials
/// were excluded by the rules before this one.
class ExcludeParticipantsByTrialLoss : public CleaningRule {
 public:
  explicit ExcludeParticipantsByTrialLoss(double max_excluded_percent) : max_percent_(max_excluded_percent) {}
  AuditLevel level() const override { return AuditLevel::participant; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  double max_percent_;
};

/// Excludes a participant whose mean of a numeric trial variable (e.g. answer
/// correctness 0/1) over their trials is below min_mean. Trials without the
/// variable are left out of the mean; a participant with none is excluded, saying so.
class ExcludeParticipantsByVariable : public CleaningRule {
 public:
  ExcludeParticipantsByVariable(std::string variable, double min_mean) : variable_(std::move(variable)), min_mean_(min_mean) {}
  AuditLevel level() const override { return AuditLevel::participant; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  std::string variable_;
  double min_mean_;
};

}  // namespace gazemill
