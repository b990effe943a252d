#pragma once
// The measure tables in files: tidy TSV (long and wide), the aggregates, and
// the store (/measures). In TSV a missing value is written NA; in the store
// numbers are float64 with NaN for NA and texts are "" when absent (each
// dataset says so in its "missing" attribute).
//
// Column order: participant, session, trial, item, the design's factors, the
// other trial variables (by name), then the region's columns.

#include <string>
#include <vector>

#include "io/report_store.h"
#include "io/table_set.h"
#include "io/study_store.h"
#include "pipeline/measure_table.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// Long: the columns above, region, region_label, region_role, measure, value.
std::string measures_long_tsv(const std::vector<MeasureRow>& rows, const DesignSpec& design);
/// The same text handed to `pieces` a megabyte at a time (whole lines): the
/// largest table a run writes (60 MB for 40 participants) never whole in memory.
void measures_long_tsv(const std::vector<MeasureRow>& rows, const DesignSpec& design, const TextPieces& pieces);
/// Wide: one row per participant x trial x region, every measure a column,
/// and the preceding_* and following_* columns of the regions either side.
std::string measures_wide_tsv(const std::vector<MeasureRow>& rows, const DesignSpec& design);
/// An aggregate table: its key columns, the factors, the denominators, the
/// probabilities, and mean_*, sd_*, n_* of every duration measure.
std::string aggregates_tsv(const AggregateTable& table, const std::vector<std::string>& factors);

/// The columns write_measures stores under /measures/wide and under an
/// aggregate's group, as read_stored_table reads them back (what a run lends
/// its report instead of its reading them back).
StoredTable measures_wide_table(const std::vector<MeasureRow>& rows, const DesignSpec& design);
StoredTable aggregate_table(const AggregateTable& table, const std::vector<std::string>& factors);

/// /measures/wide/<column>, and /measures/by_item_region, /measures/by_role,
/// /measures/by_participant (their columns as in the TSV).
/// Each from its table as measures_wide_table and aggregate_table make it.
void write_measures(StudyStoreWriter& store, const StoredTable& wide, const std::vector<const StoredTable*>& aggregates,
                    const std::vector<std::string>& aggregate_names);

/// Where the kept fixations were placed, per participant and design cell:
/// participant, <factors>, on_region, beside_text, off_lines.
std::string placement_tsv(const PlacementCounts& counts, const std::vector<std::string>& factors);
/// /measures/placement/{participant,cell/<factor>,on_region,beside_text,off_lines}.
void write_placement(StudyStoreWriter& store, const PlacementCounts& counts, const std::vector<std::string>& factors);

}  // namespace gazemill
