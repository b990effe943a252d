#pragma once
// Reader for the BIDS eye-tracking layout (BIDS specification v1.11.0,
// "Physiological recordings", "Specific physiological signal types:
// Eye-tracking"): header-less *_physio.tsv.gz files described by their
// *_physio.json sidecar, optional *_physioevents.tsv.gz with messages, and
// the screen set-up in the task's *_events.json (StimulusPresentation).

#include <optional>
#include <string>
#include <vector>

#include "io/delimited_reader.h"
#include "pipeline/recording.h"

namespace gazemill {

/// The sidecar fields gazemill uses, read from *_physio.json.
struct BidsPhysioSidecar {
  double sampling_frequency_hz = 0.0;
  double start_time_s = 0.0;
  std::vector<std::string> columns;
  Eye recorded_eye = Eye::right;
  TimeUnit timestamp_unit = TimeUnit::milliseconds;
};

/// One eye's files of a recording.
struct BidsEyeFiles {
  std::string physio_tsv;
  std::string physio_json;
  std::string events_tsv;   // empty when absent
  std::string events_json;  // empty when absent
  BidsPhysioSidecar sidecar;
};

/// The files of one recording: one entry per eye, same entities but recording-<label>.
struct BidsRecordingFiles {
  std::string key;  // the file name up to _recording-
  std::vector<BidsEyeFiles> eyes;
  std::optional<ScreenGeometry> screen;  // from StimulusPresentation, when found
  std::string screen_source;             // the file the screen came from
};

/// Reads and checks a physio sidecar. Throws InputError naming the file and field.
BidsPhysioSidecar read_bids_physio_sidecar(const std::string& json_path);

/// Groups physio files by recording (eyes of one recording together), finds
/// their sidecars, event files and the screen set-up.
std::vector<BidsRecordingFiles> group_bids_recordings(const std::vector<std::string>& physio_paths);

/// Reads one recording's samples into `sink` and its messages into the result.
/// `missing_values` adds to BIDS's own "n/a".
DelimitedReadResult read_bids_recording(const BidsRecordingFiles& files, const std::vector<std::string>& missing_values,
                                        DuplicateTimestampPolicy duplicates, SampleSink& sink);

}  // namespace gazemill
