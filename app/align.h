#pragma once
// The align stage: the text line of every kept fixation (drift correction),
// between cleaning and measuring.

#include <vector>

#include "pipeline/cleaning_state.h"
#include "pipeline/line_assignment.h"
#include "pipeline/protocol.h"
#include "pipeline/regions.h"

namespace gazemill {

/// Assigns lines to every kept fixation of every kept trial, recordings on
/// `threads` threads (0: one per core); the result does not depend on it.
/// Throws InputError when a trial's item has no regions.
/// Line assignments made before with the same alignment settings and
/// regions, and the kept fixations they were made from: drift correction is
/// trial by trial, so a trial whose kept fixations are unchanged keeps its
/// lines (after a change to a cleaning rule, most trials).
struct PreviousAlignment {
  std::vector<CleanedRecording> cleaned;
  std::vector<RecordingAlignment> alignment;
};

std::vector<RecordingAlignment> align_study(const Protocol& protocol, const RegionCatalogue& regions,
                                            const std::vector<CleanedRecording>& recordings, unsigned threads = 1,
                                            const PreviousAlignment* previous = nullptr, std::size_t* trials_reused = nullptr);

/// A drawing (SVG) of every trial still flagged after review, named
/// "<recording>_trial<id>.svg", for a person to look at.
std::vector<std::pair<std::string, std::string>> flagged_trial_drawings(const Protocol& protocol, const RegionCatalogue& regions,
                                                                         const std::vector<CleanedRecording>& recordings,
                                                                         const std::vector<RecordingAlignment>& alignment);

}  // namespace gazemill
