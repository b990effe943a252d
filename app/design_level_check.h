#pragma once
// Checks the design factors' values in the trials before cleaning: a typo
// in one trial's message ("rrae" for "rare") would otherwise make a design
// cell of its own in every audit, aggregate and report, without a word.

#include <vector>

#include "pipeline/cleaning_state.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// Throws InputError naming the protocol's [design.levels] line, the first
/// trial and its value when a trial's factor value is not one of the levels
/// the protocol lists. For a factor without listed levels, warns about a
/// level with under a tenth of the trials of its factor's commonest level.
void check_design_levels(const Protocol& protocol, const std::vector<RecordingEvents>& recordings);

}  // namespace gazemill
