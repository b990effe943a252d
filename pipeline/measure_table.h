#pragma once
// The measure stage's tables: one row per participant x trial x region with
// its reading-time measures and its neighbours' (for spillover), and the
// aggregates over them.

#include <map>
#include <optional>
#include <string>
#include <vector>

namespace gazemill {

/// A region's key measures, carried by its neighbours' rows.
struct NeighbourMeasures {
  int region = 0;  // 1-based
  std::string label;
  int letters = 0;
  bool skipped = true;
  std::optional<double> first_fixation_ms, gaze_duration_ms, total_time_ms;
};

struct MeasureRow {
  std::string participant, session, recording, trial, item, condition;
  std::map<std::string, std::string> variables;
  int region = 0;  // 1-based, reading order
  std::string region_label, region_role;
  int region_letters = 0, region_words = 0, region_line = 0, region_last_line = 0;  // lines 1-based
  bool fixated = false, skipped = true;
  std::optional<bool> regression_out, regression_in;
  std::optional<double> first_fixation_ms, single_fixation_ms, gaze_duration_ms, go_past_ms, selective_go_past_ms;
  std::optional<double> total_time_ms, rereading_ms, second_pass_ms;
  int first_pass_fixations = 0, total_fixations = 0;
  std::optional<double> landing_chars, incoming_saccade_chars, incoming_saccade_deg;
  std::optional<NeighbourMeasures> previous, next;
};

/// Means and proportions over the rows of one group (NA values left out).
struct MeasureAggregate {
  std::string group;      // e.g. the region number, or the role
  std::string condition;
  std::size_t rows = 0;
  std::optional<double> fixation_probability, skipping_probability, regression_out_probability;
  std::optional<double> mean_first_fixation_ms, mean_single_fixation_ms, mean_gaze_duration_ms, mean_go_past_ms,
      mean_total_time_ms, mean_rereading_ms;
};

/// The measure names of the long table, in column order.
const std::vector<std::string>& measure_names();
/// A row's value of a named measure (booleans as 0/1), or nullopt for NA.
std::optional<double> measure_value(const MeasureRow& row, const std::string& name);

}  // namespace gazemill
