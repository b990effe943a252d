#pragma once
// clean: the protocol's cleaning rules over a detected store, with the audit.

#include <string>

#include "pipeline/cleaning_state.h"
#include "pipeline/protocol.h"

namespace gazemill {

class StudyStoreReader;
class RegionCatalogue;

/// The cleaning input from a store's recordings, trials and detected events.
CleaningState cleaning_state_from_store(const StudyStoreReader& store);

/// Places every fixation on its item's regions, for the region rules.
/// Throws InputError when an item has no regions.
void map_regions(CleaningState& state, const RegionCatalogue& regions, const RegionSpec& spec);

/// Runs the rules, replaces the store with a copy holding the cleaned
/// fixations, the removed ones with their rule and reason, and the audit;
/// writes audit.tsv, audit_totals.tsv and audit.json into `report_folder`.
AuditReport clean_study(const Protocol& protocol, const std::string& store_path, const std::string& report_folder);

}  // namespace gazemill
