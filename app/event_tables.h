#pragma once
// The event tables of a store: every detected fixation with what cleaning,
// drift correction and region mapping made of it, and every saccade and blink.

#include <vector>

#include "io/cleaning_io.h"
#include "pipeline/cleaning_state.h"
#include "pipeline/event_table.h"
#include "pipeline/line_assignment.h"
#include "pipeline/protocol.h"

namespace gazemill {

class StudyStoreReader;
class RegionCatalogue;

/// What a run still holds in memory and the store also has, so that it need
/// not be read back: every recording's metadata and events, the line
/// assignments (either may be null).
struct KnownResults {
  const std::vector<RecordingEvents>* events = nullptr;
  const std::vector<RecordingAlignment>* alignment = nullptr;
  const std::vector<CleanedRecording>* cleaned = nullptr;                           // the kept fixations
  const std::map<std::string, std::vector<RemovedFixation>>* removed = nullptr;  // by recording
};

/// Needs detected events; cleaning, line assignments and regions add their
/// columns where the store has them current (`regions` may be null). The
/// store is read on the calling thread; the rows are made `jobs` recordings
/// at a time (0: one per core), the same for any number.
EventTables event_tables(const StudyStoreReader& store, const Protocol& protocol, const RegionCatalogue* regions, bool cleaned, bool aligned,
                         KnownResults known = {}, unsigned jobs = 1);

}  // namespace gazemill
