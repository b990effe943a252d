#pragma once
// The reading-time measures of one trial, region by region, from its
// fixations in time order (Rayner 1998, Psychological Bulletin 124(3);
// Liversedge, Paterson & Pickering 1998, in Underwood (Ed.), Eye guidance in
// reading and scene perception). Regions are numbered in reading order.
//
// A region is entered in first pass when its first fixation comes before any
// fixation on a region further on; otherwise it was skipped in first pass.
// The first-pass run is the fixations on the region from that first one until
// the eyes first leave it (a fixation on another region, or off the regions).
// A run is a stretch of consecutive fixations on the region.
//
// Missing values (std::nullopt) follow one convention: a count is 0 when
// nothing happened; a duration or an indicator is missing when the event it
// describes did not exist (first-pass measures of a region skipped in first
// pass; any-pass measures of a region never fixated).
//
//   first_fixation_ms      duration of the first first-pass fixation
//   single_fixation_ms     the same, when the first-pass run has exactly one fixation
//   gaze_duration_ms       sum of the first-pass run (first-pass reading time)
//   go_past_ms             regression-path time: every fixation from entering the region until the
//                          first fixation on a region further on, including those on earlier regions
//                          and off the regions; to the end of the trial when that never happens
//   selective_go_past_ms   the same span, only the fixations on the region itself
//   total_time_ms          all fixations on the region; missing when it was never fixated
//   rereading_ms           all fixations on the region outside its first-pass run: total time - gaze
//                          duration, or total time when skipped in first pass; 0 when read only in
//                          first pass; missing when never fixated
//   second_pass_ms         the first run on the region after its first pass: the run after the
//                          first-pass run, or the first run of a region skipped in first pass; 0 when
//                          read only in first pass; missing when never fixated
//   skipped                true when not entered in first pass (never fixated included)
//   fixated                true when fixated at all
//   first_pass_fixations   fixations in the first-pass run (0 when skipped); total_fixations: all on it
//   regression_out         true when the first fixation on a region after the first-pass run lies on an
//                          earlier one; false when it lies on a later region or on the region itself
//                          (back after a fixation off the regions), or nothing follows; missing when
//                          skipped in first pass
//   regression_in          true when some run on the region began right after a fixation on a region
//                          further on (fixations off the regions between them left out); missing when
//                          never fixated
//   landing_chars          landing position of the first first-pass fixation (characters from the
//                          left edge of the region's first letter, in reading order)
//   incoming_saccade_chars signed horizontal distance from the fixation just before (on a region or
//                          not) to the first first-pass fixation, in characters, when both are on one
//                          line (negative: leftwards); missing for the trial's first fixation
//   incoming_saccade_deg   the same saccade's amplitude in degrees (Euclidean, unsigned, across lines too)

#include <optional>
#include <vector>

#include "pipeline/time_units.h"

namespace gazemill {

struct PlacedFixation {
  double duration_ms = 0;
  double x_px = 0, y_px = 0, x_deg = 0, y_deg = 0;
  int line = -1;
  int region = -1;  // -1: not on a region
  std::optional<double> landing_chars;
};

struct RegionMeasures {
  int region = 0;
  bool fixated = false;
  bool skipped = true;
  std::optional<double> first_fixation_ms, single_fixation_ms, gaze_duration_ms, go_past_ms, selective_go_past_ms;
  std::optional<double> total_time_ms, rereading_ms, second_pass_ms;
  int first_pass_fixations = 0;
  int total_fixations = 0;
  std::optional<bool> regression_out, regression_in;
  std::optional<double> landing_chars, incoming_saccade_chars, incoming_saccade_deg;
};

std::vector<RegionMeasures> reading_measures(const std::vector<PlacedFixation>& fixations, int region_count, double char_width_px);

}  // namespace gazemill
