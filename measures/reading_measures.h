#pragma once
// The reading-time measures of one trial, region by region, from its
// fixations in time order (Rayner 1998, Psychological Bulletin 124(3);
// Liversedge, Paterson & Pickering 1998, in Underwood (Ed.), Eye guidance in
// reading and scene perception). Regions are numbered in reading order.
//
// A region is entered in first pass when its first fixation comes before any
// fixation on a region further on; otherwise it was skipped in first pass and
// every first-pass measure is missing. The first-pass run is the fixations on
// the region from that first one until the eyes first leave it (a fixation on
// another region, or off the regions). Missing values are std::nullopt, never 0.
//
//   first_fixation_ms      duration of the first first-pass fixation
//   single_fixation_ms     the same, when the first-pass run has exactly one fixation
//   gaze_duration_ms       sum of the first-pass run (first-pass reading time)
//   go_past_ms             regression-path time: every fixation from entering the region until the
//                          first fixation on a region further on, including those on earlier regions
//                          and off the regions; to the end of the trial when that never happens
//   selective_go_past_ms   the same span, only the fixations on the region itself
//   total_time_ms          all fixations on the region; missing when it was never fixated
//   rereading_ms           total time - gaze duration (missing when skipped in first pass)
//   second_pass_ms         the region's second run (first visit after the first pass); 0 when not
//                          revisited, missing when skipped in first pass
//   skipped                1 when not entered in first pass (never fixated included)
//   fixated                1 when fixated at all
//   first_pass_fixations   fixations in the first-pass run; total_fixations: all on the region
//   regression_out         1 when the first fixation after the first-pass run that is on a region
//                          lies on an earlier one; missing when skipped in first pass
//   regression_in          1 when the region was entered from a region further on at any time
//   landing_chars          landing position of the first first-pass fixation (characters from the
//                          left edge of the region's first letter)
//   incoming_saccade_chars horizontal distance from the previous fixation (same line), characters
//   incoming_saccade_deg   distance from the previous fixation, degrees

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
  std::optional<int> first_pass_fixations;
  int total_fixations = 0;
  std::optional<bool> regression_out;
  bool regression_in = false;
  std::optional<double> landing_chars, incoming_saccade_chars, incoming_saccade_deg;
};

std::vector<RegionMeasures> reading_measures(const std::vector<PlacedFixation>& fixations, int region_count, double char_width_px);

}  // namespace gazemill
