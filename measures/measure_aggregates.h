#pragma once
// Aggregates of the measure rows, each within a design cell: per item and
// region (a region's number means a different stretch of text in each item),
// per region role, and per participant. Each gives its denominators
// (region_readings, first_pass_readings, fixated_readings), the skipping,
// fixation and regression probabilities over them, and N, mean and SD of
// every duration measure with NA values left out (a skipped region has no
// gaze duration, not a gaze duration of 0).

#include <vector>

#include "pipeline/measure_table.h"

namespace gazemill {

AggregateTable aggregate_by_item_region(const std::vector<MeasureRow>& rows);
/// Rows of regions without a role are left out.
AggregateTable aggregate_by_role(const std::vector<MeasureRow>& rows);
AggregateTable aggregate_by_participant(const std::vector<MeasureRow>& rows);

}  // namespace gazemill
