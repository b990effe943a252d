#pragma once
// Merges a fixation shorter than a duration into a longer neighbour close by,
// the multi-stage practice described by Eskenazi (2023, Behavior Research
// Methods): < 80 ms within 0.5 deg, then < 40 ms within 1.25 deg, each stage a
// rule of its own. What the paper leaves open is explicit here:
// - candidates are the previous and the next kept fixation of the same trial
//   that are longer than the short one and no further than max_distance
//   (mean positions), with at most max_gap_ms between them (no merging across a blink);
// - `prefer` picks among two candidates: "nearer" (default; ties go to the
//   previous one), "longer", "previous" or "next";
// - `duration`: "sum" (default; the two durations added, the saccade between
//   them not counted) or "span" (first start to last end);
// - `position`: "longer" (default; the longer fixation's position stays) or
//   "weighted" (duration-weighted mean);
// - fixations are taken in time order in one pass; a merged fixation can take
//   further short neighbours.

#include "filters/cleaning_rule.h"

namespace gazemill {

struct MergeShortFixationsParams {
  double max_duration_ms = 80.0;          // fixations shorter than this are merged
  double max_distance_deg = 0.5;          // used when distance_unit is deg
  double max_distance_px = 0.0;           // or px
  double max_distance_chars = 0.0;        // or characters, with char_width_px
  double char_width_px = 0.0;
  double max_gap_ms = 50.0;
  std::string prefer = "nearer";
  std::string duration = "sum";
  std::string position = "longer";
};

class MergeShortFixations : public CleaningRule {
 public:
  explicit MergeShortFixations(MergeShortFixationsParams p) : p_(std::move(p)) {}
  AuditLevel level() const override { return AuditLevel::fixation; }
  void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const override;

 private:
  double distance(const CleanFixation& a, const CleanFixation& b) const;
  double limit() const;
  MergeShortFixationsParams p_;
};

}  // namespace gazemill
