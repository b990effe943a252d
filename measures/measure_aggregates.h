#pragma once
// Aggregates of the measure rows: per region x condition, per region role x
// condition, and per participant x condition. Probabilities: fixation (any
// pass), skipping (first pass), first-pass regression out (over the regions
// entered in first pass). Means leave NA values out.

#include <vector>

#include "pipeline/measure_table.h"

namespace gazemill {

std::vector<MeasureAggregate> aggregate_by_region(const std::vector<MeasureRow>& rows);
std::vector<MeasureAggregate> aggregate_by_role(const std::vector<MeasureRow>& rows);
std::vector<MeasureAggregate> aggregate_by_participant(const std::vector<MeasureRow>& rows);

}  // namespace gazemill
