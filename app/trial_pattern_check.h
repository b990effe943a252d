#pragma once
// Checks, once the recordings are read, that every marker and variables
// pattern of [trials] found its message somewhere. A misspelt pattern
// matches nothing, silently: the trials then lack the marker and a rule
// anchored on it removes every one of them with exit 0.

#include <string>
#include <utility>
#include <vector>

#include "pipeline/protocol.h"
#include "pipeline/trial_segmenter.h"

namespace gazemill {

/// `read`: the recordings read this run with what their patterns found.
/// Throws InputError naming the protocol file, the key's line and the
/// pattern when a marker or variables pattern matched in no trial of them,
/// and `whole_study` (every recording of the study was read) holds;
/// otherwise only warns. Warns for each recording in which a marker that
/// others have is in none of its trials.
void check_trial_patterns(const Protocol& protocol, const std::vector<std::pair<std::string, const TrialPatternUse*>>& read, bool whole_study);

}  // namespace gazemill
