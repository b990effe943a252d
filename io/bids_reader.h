#pragma once
// Reader for the BIDS eye-tracking layout (BIDS specification v1.11.0,
// "Physiological recordings", "Specific physiological signal types:
// Eye-tracking"): header-less *_physio.tsv.gz files described by their
// *_physio.json sidecars, optional *_physioevents.tsv.gz with messages (and
// the tracker's own events), the task's *_events.tsv and, in its
// *_events.json, the screen set-up (StimulusPresentation). Every sidecar is
// found and merged by the Inheritance Principle (io/bids_sidecars.h): the
// dataset root may hold what every recording shares.

#include <optional>
#include <string>
#include <vector>

#include "pipeline/events.h"
#include "io/bids_sidecars.h"
#include "io/delimited_reader.h"
#include "pipeline/input_error.h"
#include "pipeline/recording.h"

namespace gazemill {

/// The sidecar fields gazemill uses, read from the merged *_physio.json.
struct BidsPhysioSidecar {
  double sampling_frequency_hz = 0.0;
  double start_time_s = 0.0;
  std::vector<std::string> columns;
  Eye recorded_eye = Eye::right;
  TimeUnit timestamp_unit = TimeUnit::milliseconds;
  bool has_pupil = false;  // the pupil column is among Columns
};

/// One eye's files of a recording.
struct BidsEyeFiles {
  std::string physio_tsv;
  std::string physio_json;        // the lowest applicable physio sidecar (errors about missing keys name it)
  MergedSidecar physio_sidecar;   // every applicable *_physio.json, merged
  std::string events_tsv;         // the *_physioevents.tsv[.gz] beside it; "" when absent
  std::string events_json;        // its lowest applicable sidecar
  MergedSidecar events_sidecar;   // every applicable *_physioevents.json, merged
  BidsPhysioSidecar sidecar;
};

/// The files of one recording: one entry per eye, same entities but recording-<label>.
struct BidsRecordingFiles {
  std::string key;  // the folder and the file name up to _recording-
  std::vector<BidsEyeFiles> eyes;
  std::optional<ScreenGeometry> screen;  // from StimulusPresentation, when found
  std::string screen_source;             // the file the screen came from
  // A StimulusPresentation that could not be read: thrown at ingest only
  // when the protocol gives no [screen] instead.
  std::optional<InputError> screen_error;
  std::string task_events_tsv;        // the task *_events.tsv that applies; "" when none
  MergedSidecar task_events_sidecar;  // every applicable *_events.json, merged
};

/// Reads and checks one physio sidecar file on its own (column names as in
/// `names`). Throws InputError naming the file and field.
BidsPhysioSidecar read_bids_physio_sidecar(const std::string& json_path, const BidsInputSpec& names = {});

/// The fields of a merged physio sidecar; errors name the file that gave
/// the field, or `lowest` when the field is missing.
BidsPhysioSidecar bids_physio_fields(const MergedSidecar& sidecar, const std::string& lowest, const BidsInputSpec& names);

/// Groups physio files by recording (eyes of one recording together), finds
/// and merges their sidecars, their events files and the task's events and
/// screen set-up. Throws InputError naming the file and field.
std::vector<BidsRecordingFiles> group_bids_recordings(const std::vector<std::string>& physio_paths, const BidsInputSpec& names = {});

/// Every file a recording is read from: data files and every sidecar, for provenance.
std::vector<std::string> bids_input_files(const BidsRecordingFiles& files);

struct BidsReadOptions {
  std::vector<std::string> missing_values;  // besides BIDS's own "n/a"
  DuplicateTimestampPolicy duplicates = DuplicateTimestampPolicy::error;
  BidsInputSpec names;
};

/// Reads one recording's samples into `sink` and its messages into the
/// result; the tracker's own events into `tracker_events` when the protocol
/// maps them (and the pointer is given).
DelimitedReadResult read_bids_recording(const BidsRecordingFiles& files, const BidsReadOptions& options, SampleSink& sink,
                                        std::vector<TrackerEvent>* tracker_events = nullptr);

/// The tracker's own events of one eye's physio events file, by the
/// protocol's patterns. Throws InputError naming file, line and column.
std::vector<TrackerEvent> read_bids_tracker_events(const BidsEyeFiles& eye, const BidsInputSpec& names);

}  // namespace gazemill
