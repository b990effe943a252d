#pragma once
// The whole study in one run: ingest -> detect -> clean -> align -> measure,
// each stage's result recording what it was made from. Recordings stream
// through reading and detection in memory, on a pool of threads, and are
// written to the store in recording order (so the store is the same for any
// number of threads); the store is written once per run. A result whose
// inputs and protocol section are unchanged is reused, so a second run with
// nothing changed does no work.
//
// The stage commands (gazemill ingest, detect, clean, align, measure) are
// runs of one stage: its upstream results must be current for the protocol
// given (else the error names the stage to run), and everything downstream
// of it becomes stale and is removed.

#include <cstdint>
#include <exception>
#include <functional>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "io/cleaning_io.h"
#include "io/report_store.h"
#include "pipeline/audit.h"
#include "pipeline/cleaning_state.h"
#include "pipeline/line_assignment.h"
#include "pipeline/measure_table.h"
#include "pipeline/protocol.h"
#include "pipeline/stage.h"

namespace gazemill {

/// What a run made and still holds, the store's own, for work beside its tables.
struct RunResults {
  bool store_written = false;
  std::shared_ptr<const std::vector<RecordingEvents>> events;
  const std::vector<MeasureRow>* rows = nullptr;  // when measure ran in this run
  std::shared_ptr<const AggregateTable> by_role;  // likewise
  std::shared_ptr<const StoredTable> measures_wide, measures_by_role;  // likewise, as the store holds them
  // What the store holds and the run holds too (null where it does not): see StudyRunReport.
  std::shared_ptr<const std::vector<RecordingAlignment>> alignment;
  std::shared_ptr<const std::vector<CleanedRecording>> cleaned;
  std::shared_ptr<const std::map<std::string, RecordingCleaningRows>> cleaning_rows;
  const AuditReport* audit = nullptr;  // when clean ran
};

struct StudyRunOptions {
  std::string store_path;
  std::string tables_folder;          // "" = write no tables
  unsigned jobs = 0;                  // worker threads; 0 = one per core
  std::optional<Stage> only;          // run this stage alone (a stage command)
  Stage until = Stage::measure;       // a whole run stops after this stage
  // A shard of a study run on many machines: only the recordings whose id
  // falls to shard `shard_index` of `shard_count` (a stable hash of the id).
  unsigned shard_index = 0, shard_count = 0;  // shard_count 0 = the whole study
  int deflate_level = 1;
  bool show_progress = false;
  std::uint64_t raw_budget_bytes = std::uint64_t{48} << 20;  // per recording, see RecordingWorkOptions
  // Work on the finished store that may run while the tables are written (the
  // report): called once after the store is committed, with what the run
  // made and lends; on a thread of its own when jobs > 1 and HDF5 is
  // thread-safe, else after the tables. Its exception is the run's.
  std::function<void(const RunResults& made)> beside_tables;
};

/// What a run did, stage by stage, with the counts of what it read and made.
struct StudyRunReport {
  std::map<Stage, std::string> stages;  // "ran", "reused", "stale", or why it did not run
  std::size_t recordings = 0, recordings_read = 0, recordings_detected = 0;
  std::vector<std::string> warnings_kept;  // the warnings of reused stages, said again ("clean: ...")
  std::vector<std::string> recordings_removed;  // in the store before, no longer among the inputs: gone with their results
  std::uint64_t samples = 0, messages = 0, trials = 0, input_bytes = 0, repairs = 0;  // of the recordings read
  std::uint64_t samples_detected = 0, fixations = 0, saccades = 0, blinks = 0;       // of the recordings detected
  bool events_imported = false;      // the events came from fixation lists, not from detection
  std::optional<AuditReport> audit;  // when clean ran
  std::vector<MeasureRow> rows;      // when measure ran
  std::shared_ptr<const AggregateTable> by_item_region, by_role, by_participant;  // ... and their aggregates
  std::shared_ptr<const StoredTable> measures_wide, measures_by_role;               // ... as the store holds them
  PlacementCounts placement;         // where measure placed the kept fixations
  std::size_t aligned_trials_reused = 0;  // trials whose kept fixations and lines were as in the previous run
  bool store_written = false;
  std::string store_path;            // the study store the run wrote or read
  // What the run read or made and the store now holds, lent to the tables and
  // the report so they need not read it back (null when the run did not hold it).
  std::shared_ptr<const std::vector<RecordingEvents>> events;
  std::shared_ptr<const std::vector<RecordingAlignment>> alignment;
  std::shared_ptr<const std::vector<CleanedRecording>> cleaned;                          // kept fixations, trial verdicts
  std::shared_ptr<const std::map<std::string, std::vector<RemovedFixation>>> removed;  // when clean ran
  std::shared_ptr<const std::map<std::string, RecordingCleaningRows>> cleaning_rows;   // likewise, as the report reads them
  std::exception_ptr beside_tables_error;  // what StudyRunOptions::beside_tables threw, if anything
  std::vector<std::string> tables;   // written this run
  std::string tables_folder;
};

/// Runs the study (or one stage of it). Throws InputError on bad input;
/// nothing half-written is left in place.
StudyRunReport run_study(const Protocol& protocol, const StudyRunOptions& options);

/// Writes the tables of the store as it now is into `folder`, as one set with
/// a manifest: the event lists once detected, the audit once cleaned, the
/// measures once measured. Skipped when the folder already holds this very
/// set. `fresh` lends what a run has in memory (and takes the rows computed
/// here). Tables are formatted on threads of their own unless `jobs` is 1.
/// Returns the files written.
std::vector<std::string> write_study_tables(const std::string& store_path, const std::string& folder, const Protocol& protocol,
                                            StudyRunReport* fresh = nullptr, unsigned jobs = 0);

/// The study-level keys of ingest and detect from the recordings' own keys
/// (by recording id), as every run and a merge of shards compute them.
std::string study_ingest_key(const std::map<std::string, std::string>& ingest_keys);
std::string study_detect_key(const std::string& study_ingest_key, const std::map<std::string, std::string>& detect_keys);
/// The shard (0..count-1) a recording falls to: FNV-1a of its id, modulo count.
unsigned shard_of(const std::string& recording_id, unsigned count);

/// The store a protocol writes by default: <protocol folder>/<study name or "study">.gzm.h5.
std::string default_store_path(const Protocol& protocol);
/// The tables folder of a store by default: beside it, "<store name>-tables".
std::string default_tables_folder(const std::string& store_path);

}  // namespace gazemill
