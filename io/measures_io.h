#pragma once
// The measure tables in files: tidy TSV (long and wide), the aggregates, and
// the store (/measures). NA is written as "NA" in TSV and as NaN in the store.

#include <string>
#include <vector>

#include "io/study_store.h"
#include "pipeline/measure_table.h"

namespace gazemill {

/// Long: participant, session, trial, item, condition, <trial variables>, region,
/// region_label, region_role, measure, value.
std::string measures_long_tsv(const std::vector<MeasureRow>& rows);
/// Wide: one row per participant x trial x region, every measure a column,
/// plus previous_* and next_* region columns for spillover.
std::string measures_wide_tsv(const std::vector<MeasureRow>& rows);
std::string aggregates_tsv(const std::vector<MeasureAggregate>& rows, const std::string& group_column);

/// /measures/wide/<column> (strings or float64 with NaN for NA) and
/// /measures/by_region, /measures/by_role, /measures/by_participant.
void write_measures(StudyStoreWriter& store, const std::vector<MeasureRow>& rows, const std::vector<MeasureAggregate>& by_region,
                    const std::vector<MeasureAggregate>& by_role, const std::vector<MeasureAggregate>& by_participant);

}  // namespace gazemill
