#pragma once
// The clean stage: the protocol's cleaning rules over every recording's
// detected events, with the audit. Works on values; the study run writes them.

#include <string>
#include <vector>

#include "pipeline/cleaning_state.h"
#include "pipeline/protocol.h"

namespace gazemill {

class StudyStoreReader;
class RegionCatalogue;

/// The cleaning input from every recording's trials and events (no samples needed).
CleaningState cleaning_state_from(const std::vector<RecordingEvents>& recordings, const DesignSpec& design);

/// Places every fixation on its item's regions, for the region rules.
/// Throws InputError when an item has no regions.
void map_regions(CleaningState& state, const RegionCatalogue& regions, const RegionSpec& spec);

/// Runs the rules (none: everything is kept). Throws InputError naming the
/// protocol and the rule for a bad rule.
CleaningOutcome clean_events(const Protocol& protocol, const std::vector<RecordingEvents>& recordings);

/// The kept fixations and trial verdicts of each recording, from the state
/// after cleaning (taken apart, trial by trial, so that the fixations are
/// never held twice) or from a store.
std::vector<CleanedRecording> cleaned_recordings(CleaningState&& state, const std::vector<RecordingEvents>& recordings);
std::vector<CleanedRecording> cleaned_recordings(const StudyStoreReader& store);

}  // namespace gazemill
