#pragma once
// measure: regions, fixation-to-region mapping and the reading-time measures.

#include <string>
#include <vector>

#include "pipeline/measure_table.h"
#include "pipeline/protocol.h"

namespace gazemill {

class StudyStoreReader;
class RegionCatalogue;

/// One row per kept trial x region of the store's cleaned fixations (the
/// detected ones when the study was not cleaned).
std::vector<MeasureRow> measure_rows(const StudyStoreReader& store, const RegionCatalogue& regions, const RegionSpec& spec);

/// Computes the measures and aggregates, replaces the store with a copy that
/// holds them (/measures), and writes measures.tsv (long), measures_wide.tsv,
/// measures_by_region.tsv, measures_by_role.tsv and measures_by_participant.tsv
/// into `out_folder`.
std::vector<MeasureRow> measure_study(const Protocol& protocol, const std::string& store_path, const std::string& out_folder);

}  // namespace gazemill
