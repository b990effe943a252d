#pragma once
// The work on one recording, done on a worker thread: its files read into
// compressed sample chunks, its messages cut into trials, and its events
// detected trial by trial. Nothing here touches the store; the study run
// writes each recording's output in recording order.

#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "app/study_inputs.h"
#include "detectors/event_detector.h"
#include "pipeline/events.h"
#include "io/compressed_samples.h"
#include "pipeline/events.h"
#include "pipeline/protocol.h"
#include "pipeline/provenance.h"
#include "pipeline/recording.h"
#include "pipeline/sample_digest.h"
#include "pipeline/trial_segmenter.h"

namespace gazemill {

struct RecordingWorkOptions {
  int deflate_level = 1;
  std::size_t chunk_rows = std::size_t{1} << 16;
  // Samples are also kept as they are while a recording's fit in this; a
  // longer recording is decoded from its chunks trial by trial.
  std::uint64_t raw_budget_bytes = std::uint64_t{48} << 20;
  std::function<void(std::uint64_t bytes)> progress;  // bytes of input read since the last call
};

/// One recording's results, as the store receives them.
struct RecordingOutput {
  Recording recording;  // metadata, messages and trials; its samples are in `samples`
  SampleSummary summary;
  std::shared_ptr<CompressedSamples> samples;  // null when the samples stay as they are in the store
  std::vector<InputFileRecord> inputs;         // files read (ingest only)
  RepairCounts repairs;
  TrialPatternUse pattern_use;  // ingest only: what the [trials] patterns found
  std::uint64_t zero_gaze_samples = 0;  // ingest only: gaze read at exactly (0, 0) px
  bool keeps_tracker_events = false;         // the protocol maps the tracker's own events (ingest)
  std::vector<TrackerEvent> tracker_events;  // ... as the BIDS physio events files give them
  std::string ingest_key;
  bool detected = false;                     // detected this run, or imported from a fixation list at ingest
  std::size_t fixations_outside_trials = 0;  // fixation list: rows that start in no trial, left out
  std::size_t other_eye_rows = 0;            // fixation list: rows of the eye the protocol leaves out
  DetectedEvents events;
  CompressedColumn labels;  // one per sample: the codes of SampleLabel
  SampleDigest digest;      // detected this run: what the report needs from the samples
  std::string detect_key;
};

/// Reads the recording's files (ingest). Throws InputError on bad input.
/// `known` holds the recorded SHA-256 of inputs unchanged since the last run
/// (path, size and modification time alike), so they are not read twice.
RecordingOutput ingest_recording(const RecordingInputs& inputs, const Protocol& protocol,
                                 const std::vector<InputFileRecord>& known, const RecordingWorkOptions& options);

/// Detects events in every trial of `out` (its samples must be present), and
/// digests its samples for the report while each trial is decoded.
void detect_events(RecordingOutput& out, const EventDetector& detector, const DetectionSpec& spec,
                   const RecordingWorkOptions& options);

/// An input file's record: path, size, modification time and SHA-256
/// (reused from `known` when path, size and modification time match).
InputFileRecord describe_input(const std::string& path, const std::string& recording,
                               const std::vector<InputFileRecord>& known);

}  // namespace gazemill
