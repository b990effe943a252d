#pragma once
// The event tables of a store: every detected fixation with what cleaning,
// drift correction and region mapping made of it, and every saccade and blink.

#include <array>
#include <memory>
#include <set>
#include <string>
#include <vector>

#include "io/cleaning_io.h"
#include "io/table_set.h"
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

/// What the event tables are made from. Needs detected events; cleaning, line
/// assignments and regions add their columns where the store has them current
/// (`regions` may be null). What the run did not lend is read from the store
/// here, on the calling thread.
class EventTableSources {
 public:
  EventTableSources(const StudyStoreReader& store, const Protocol& protocol, const RegionCatalogue* regions, bool cleaned, bool aligned,
                    KnownResults known = {});
  ~EventTableSources();
  EventTableSources(const EventTableSources&) = delete;
  EventTableSources& operator=(const EventTableSources&) = delete;

  std::size_t recordings() const;
  std::set<std::string> trial_variables() const;  // every trial variable name of the study
  EventTables rows(std::size_t k) const;           // the k-th recording's rows (any thread)

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

/// fixations.tsv, saccades.tsv and blinks.tsv, to `files` in that order: the
/// rows of `jobs` recordings at a time made and formatted on as many threads
/// (0: one per core) and written in study order, so that a few recordings'
/// rows are held, not the study's, and the text is the same for any number.
void write_event_tables(const EventTableSources& sources, const DesignSpec& design, unsigned jobs, const std::array<TextPieces, 3>& files);

}  // namespace gazemill
