#pragma once
// The measure stage: fixations onto regions, and the reading-time measures.

#include <string>
#include <vector>

#include "pipeline/cleaning_state.h"
#include "pipeline/line_assignment.h"
#include "pipeline/measure_table.h"
#include "pipeline/protocol.h"

namespace gazemill {

class RegionCatalogue;

/// One row per kept trial x region: every kept fixation placed on the line
/// the align stage gave it and on the region under it. `threads` recordings
/// at once (0: one per core); the rows do not depend on it.
std::vector<MeasureRow> measure_rows(const std::vector<CleanedRecording>& recordings, const std::vector<RecordingAlignment>& alignment,
                                     const RegionCatalogue& regions, const RegionSpec& spec, const DesignSpec& design,
                                     PlacementCounts* placement = nullptr, unsigned threads = 1);

}  // namespace gazemill
