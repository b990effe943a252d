#pragma once
// The measure stage's tables: one row per participant x trial x region with
// its reading-time measures and its neighbours' (for spillover), and the
// aggregates over them.

#include <cstdint>
#include <map>
#include <memory>
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
  std::string participant, session, recording, trial, item;
  std::string cell;                              // design cell (cell_key of the factors' levels)
  // Every trial variable (item and factors included), one map shared by the
  // trial's rows: a copy per region was a tenth of a run's memory.
  std::shared_ptr<const std::map<std::string, std::string>> variables;
  int region = 0;  // 1-based, reading order
  std::string region_label, region_role;
  int region_letters = 0, region_words = 0, region_line = 0, region_last_line = 0;  // lines 1-based
  bool fixated = false, skipped = true;
  std::optional<bool> regression_out, regression_in;
  std::optional<double> first_fixation_ms, single_fixation_ms, gaze_duration_ms, go_past_ms, selective_go_past_ms;
  std::optional<double> total_time_ms, rereading_ms, second_pass_ms;
  int first_pass_fixations = 0, total_fixations = 0;
  std::optional<double> landing_chars, incoming_saccade_chars, incoming_saccade_deg;
  std::optional<NeighbourMeasures> before, after;  // the regions before and after it in reading order
};

/// N, mean and sample SD (n - 1) of one measure over a group, NA values left out.
struct MeasureStats {
  std::size_t n = 0;
  std::optional<double> mean, sd;  // mean when n >= 1, sd when n >= 2
};

/// One group of rows: its key (e.g. item and region), its design cell, how
/// many rows it has of each kind (the probabilities' denominators), and the
/// probabilities and duration statistics over them.
struct MeasureAggregate {
  std::vector<std::string> key;
  std::string cell;
  std::size_t region_readings = 0;      // participant x trial x region rows
  std::size_t first_pass_readings = 0;  // of those, entered in first pass
  std::size_t fixated_readings = 0;     // of those, fixated at all
  std::optional<double> skipping_probability;        // skipped in first pass / region_readings
  std::optional<double> ever_fixated_probability;    // fixated in any pass / region_readings
  std::optional<double> regression_out_probability;  // / first_pass_readings
  std::optional<double> regression_in_probability;   // / fixated_readings
  std::map<std::string, MeasureStats> durations;     // by measure name, see duration_measure_names()
};

struct AggregateTable {
  std::vector<std::string> key_columns;  // e.g. {"item", "region"}
  std::vector<MeasureAggregate> rows;
};

/// Where the kept fixations of one participant's trials in one design cell
/// were placed: every fixation the measures do not credit to a region is
/// counted here, by reason.
struct FixationPlacement {
  std::uint64_t on_region = 0;    // on a line and on a region of it
  std::uint64_t beside_text = 0;  // on a line, but left or right of its regions (beyond the margin allowance)
  std::uint64_t off_lines = 0;    // on no line (between or beyond the lines, past the allowance)
};
/// By (participant, design cell key).
using PlacementCounts = std::map<std::pair<std::string, std::string>, FixationPlacement>;

/// The measure names of the long table, in column order.
const std::vector<std::string>& measure_names();
/// The duration measures the aggregates summarise.
const std::vector<std::string>& duration_measure_names();
/// A row's value of a named measure (booleans as 0/1), or nullopt for NA.
std::optional<double> measure_value(const MeasureRow& row, const std::string& name);
/// The same by position in measure_names(), for tables that write every
/// measure of every row (no name comparisons per value).
std::optional<double> measure_value(const MeasureRow& row, std::size_t index);

}  // namespace gazemill
