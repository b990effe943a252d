#pragma once
// Fixations a lab already has (a fixation list, or a tracker's own events)
// taken as a recording's events instead of detecting them from samples:
// each fixation goes to the trial in which it starts, keeps its times and
// position as given, and gets its position in degrees from the screen.

#include <cstddef>
#include <vector>

#include "pipeline/events.h"
#include "pipeline/recording.h"

namespace gazemill {

struct FixationImport {
  DetectedEvents events;             // fixations and one TrialDetection per trial (no samples)
  std::size_t outside_trials = 0;    // fixations that start in no trial, left out
};

/// `fixations` in start order, `trials` in time order (they may not
/// overlap). A fixation that starts at a trial's start or end belongs to it;
/// its end may lie past the trial's, as the list gives it.
FixationImport import_fixations(const std::vector<Trial>& trials, const std::vector<FixationEvent>& fixations,
                                const ScreenGeometry& screen);

}  // namespace gazemill
