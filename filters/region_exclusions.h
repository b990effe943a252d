#pragma once
// Trial exclusions that need regions (fixations mapped to the item's regions
// before the rules run): a blink or track loss during first-pass reading of a
// named region, the named region skipped in first pass, or no fixation at all
// on the first region. A region is named by number (`region`, from 1) or by
// its role in the region files (`role`, e.g. "target").
//
// First-pass reading of a region lasts from its first first-pass fixation (see
// measures/reading_measures.h) until the next fixation after the first-pass
// run starts, so a blink as the eyes leave the region counts.

#include <string>

#include "filters/cleaning_rule.h"

namespace gazemill {

/// Which region a rule is about: a number (0-based here) or a role.
struct NamedRegion {
  int index = -1;
  std::string role;
  /// The region's 0-based index in `trial`, or -1 when the trial has no such region.
  int resolve(const CleanTrial& trial) const;
  std::string describe() const;
};

class ExcludeTrialsWithGapInFirstPass : public CleaningRule {
 public:
  ExcludeTrialsWithGapInFirstPass(NamedRegion region, std::string events) : region_(std::move(region)), events_(std::move(events)) {}
  AuditLevel level() const override { return AuditLevel::trial; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  NamedRegion region_;
  std::string events_;  // blink, loss or any
};

class ExcludeTrialsSkippingRegion : public CleaningRule {
 public:
  explicit ExcludeTrialsSkippingRegion(NamedRegion region) : region_(std::move(region)) {}
  AuditLevel level() const override { return AuditLevel::trial; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  NamedRegion region_;
};

class ExcludeTrialsWithoutFirstRegion : public CleaningRule {
 public:
  AuditLevel level() const override { return AuditLevel::trial; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;
};

}  // namespace gazemill
