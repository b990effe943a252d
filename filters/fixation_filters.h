#pragma once
// Fixation-level deletions: too short, too long, next to a blink, or outside
// an area. Typical values (Eskenazi 2023, Behavior Research Methods): shorter
// than 80 ms, longer than 800-1200 ms.

#include "filters/cleaning_rule.h"

namespace gazemill {

/// Deletes fixations shorter than min_duration_ms.
class DeleteShortFixations : public CleaningRule {
 public:
  explicit DeleteShortFixations(double min_duration_ms) : min_ms_(min_duration_ms) {}
  AuditLevel level() const override { return AuditLevel::fixation; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  double min_ms_;
};

/// Deletes fixations longer than max_duration_ms.
class DeleteLongFixations : public CleaningRule {
 public:
  explicit DeleteLongFixations(double max_duration_ms) : max_ms_(max_duration_ms) {}
  AuditLevel level() const override { return AuditLevel::fixation; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  double max_ms_;
};

/// Deletes fixations that end less than within_ms before a blink starts,
/// start less than within_ms after one ends, or overlap one.
class DeleteFixationsNearBlinks : public CleaningRule {
 public:
  explicit DeleteFixationsNearBlinks(double within_ms) : within_ms_(within_ms) {}
  AuditLevel level() const override { return AuditLevel::fixation; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  double within_ms_;
};

/// Deletes fixations whose mean position lies outside a box widened by margin_px:
/// the screen, or a box given in px; or, with the protocol's regions, every
/// fixation that the mapping placed on no region (the text area, with the
/// mapping's own margin allowances).
struct AreaBox {
  double left_px = 0, top_px = 0, right_px = 0, bottom_px = 0;
};
class DeleteFixationsOutside : public CleaningRule {
 public:
  enum class Area { screen, box, text };
  DeleteFixationsOutside(Area area, AreaBox box, double margin_px) : area_(area), box_(box), margin_px_(margin_px) {}
  AuditLevel level() const override { return AuditLevel::fixation; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  Area area_;
  AreaBox box_;
  double margin_px_;
};

}  // namespace gazemill
