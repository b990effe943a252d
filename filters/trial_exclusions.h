#pragma once
// Trial-level exclusions. An excluded trial takes its remaining fixations and
// its samples with it (counted for the same rule).

#include <string>

#include "filters/cleaning_rule.h"

namespace gazemill {

/// Excludes a trial in which more than max_missing_percent of the samples have no valid gaze.
class ExcludeTrialsWithDataLoss : public CleaningRule {
 public:
  explicit ExcludeTrialsWithDataLoss(double max_missing_percent) : max_percent_(max_missing_percent) {}
  AuditLevel level() const override { return AuditLevel::trial; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  double max_percent_;
};

/// Excludes a trial with fewer than min_fixations kept fixations.
class ExcludeTrialsWithFewFixations : public CleaningRule {
 public:
  explicit ExcludeTrialsWithFewFixations(double min_fixations) : min_(min_fixations) {}
  AuditLevel level() const override { return AuditLevel::trial; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  double min_;
};

/// Excludes a trial shorter than min_duration_ms or longer than max_duration_ms (start to end message).
class ExcludeTrialsByDuration : public CleaningRule {
 public:
  ExcludeTrialsByDuration(double min_ms, double max_ms) : min_ms_(min_ms), max_ms_(max_ms) {}
  AuditLevel level() const override { return AuditLevel::trial; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  double min_ms_, max_ms_;
};

/// Excludes a trial in which a blink and/or track loss overlaps a window
/// from_ms..to_ms after a marker ("trial_start" or a marker of the protocol).
/// A trial without the marker is excluded, saying so.
class ExcludeTrialsWithGapInWindow : public CleaningRule {
 public:
  ExcludeTrialsWithGapInWindow(std::string marker, double from_ms, double to_ms, std::string events)
      : marker_(std::move(marker)), from_ms_(from_ms), to_ms_(to_ms), events_(std::move(events)) {}
  AuditLevel level() const override { return AuditLevel::trial; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  std::string marker_;
  double from_ms_, to_ms_;
  std::string events_;  // blink, loss or any
};

}  // namespace gazemill
