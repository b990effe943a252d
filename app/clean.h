#pragma once
// The clean stage: the protocol's cleaning rules over every recording's
// detected events, with the audit. Works on values; the study run writes them.

#include <functional>
#include <map>
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

/// The same, participant by participant (filters/cleaning_engine.h,
/// run_cleaning_by_participant): the same outcome in parts, each handed to
/// `each` as made, so that one participant's copies are held at a time.
/// Returns the study's audit.
AuditReport clean_events_by_participant(const Protocol& protocol, const std::vector<RecordingEvents>& recordings,
                                        const std::function<void(CleaningOutcome&&)>& each);

/// The kept fixations and trial verdicts of each recording with trials in
/// the state after cleaning (taken apart, trial by trial, so that the
/// fixations are never held twice), by recording id, each with its `meta`;
/// or of every recording in a store.
std::map<std::string, CleanedRecording> cleaned_recordings(CleaningState&& state, const std::map<std::string, const Recording*>& meta);
std::vector<CleanedRecording> cleaned_recordings(const StudyStoreReader& store);

}  // namespace gazemill
