#pragma once
// The HDF5 study store: one file per study, a group per recording.
//
// Layout (format "gazemill-study-store", version 3; version 2 is read too):
//   /                                  attrs format, format_version
//   /provenance                        attrs gazemill_version, protocol_path, protocol_text,
//                                      protocol_sha256, created_utc (of the ingest)
//   /provenance/inputs/{path,size_bytes,modified_ns,sha256,recording}
//   /provenance/repairs/{recording,kind,count}
//   /provenance/stages/<stage>         one per study stage that ran (ingest, detect, clean, align,
//                                      measure): attrs key, upstream_key, settings (JSON), state
//                                      ("current" or "stale"), stale_reason, created_utc,
//                                      gazemill_version, protocol_text, protocol_path, and
//                                      warnings (a JSON list) when it warned of anything
//   /recordings/<id>                   attrs participant, session, source_file, sample_rate_hz,
//                                      eyes, screen_*, sample_count, missing_left, missing_right,
//                                      first_time_us, last_time_us, ingest_key, and warnings
//                                      (a JSON list) when reading it warned of anything
//   /recordings/<id>/samples/time_us   int64, unit "us"
//   /recordings/<id>/samples/<eye>_x_px, <eye>_y_px (float32, "px"), <eye>_pupil (float32,
//                                      "tracker units"), <eye>_valid (uint8)   eye = left|right
//   /recordings/<id>/messages/{time_us,text}
//   /recordings/<id>/trials/{id,start_us,end_us}
//   /recordings/<id>/trials/variables/<name>       strings, one per trial ("" when unset): every name the
//                                                  trial patterns capture (item, design factors, ...)
//   /recordings/<id>/trials/markers/<name>_us      int64, one per trial, kMissingTime when unset
//   /recordings/<id>/events                        written by detect; attrs method, parameters (JSON),
//                                                  detect_key
//   /recordings/<id>/events/sample_label           uint8 per sample: 0 fixation, 1 saccade, 2 pso,
//                                                  3 blink, 4 loss, 5 other (outside trials, unclassified),
//                                                  6 smooth pursuit (only when [detection.pursuit] asks)
//   /recordings/<id>/events/fixations/{trial,eye,start_us,end_us,duration_ms,x_px,y_px,x_median_px,
//                                      y_median_px,x_deg,y_deg,dispersion_deg,pupil}
//   /recordings/<id>/events/saccades/{trial,eye,start_us,end_us,start_x_px,start_y_px,end_x_px,end_y_px,
//                                     amplitude_deg,peak_velocity_deg_s,direction_deg}
//   /recordings/<id>/events/blinks/{trial,eye,start_us,end_us}
//   /recordings/<id>/events/losses/{trial,start_us,end_us}   lost tracking that is no blink (end: last sample)
//   /recordings/<id>/events/trials/{trial,eye,samples,missing_samples,<fitted>}  one row per trial: the eye
//                                                  used, its sample counts, and each value the detector
//                                                  set from the trial's own data (float64 with its unit,
//                                                  NaN where not set), e.g. dispersion_threshold_deg
//   /recordings/<id>/tracker_events                written by ingest when the protocol maps the tracker's own
//                                                  events ([input.bids.tracker_events]); kept beside gazemill's
//                                                  detection, never replacing it. attrs source ("BIDS physio events")
//   /recordings/<id>/tracker_events/{fixations,saccades,blinks}/{eye,start_us,end_us}   one row per event as the
//                                                  tracker's physio events file gives it (end = onset + duration)
// String columns are UTF-8, fixed-length and null-padded, or variable-length where a few values are
// far longer than the rest. Sample columns and labels are chunked (65 536 rows), shuffled and deflated; every numeric dataset
// has a "unit" attribute. The file keeps its free-space map, so a run that replaces results in
// place reuses their space instead of growing the file.

#include <H5Cpp.h>

#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/events.h"
#include "io/compressed_samples.h"
#include "pipeline/events.h"
#include "pipeline/provenance.h"
#include "pipeline/recording.h"
#include "pipeline/stage.h"

namespace gazemill {

inline constexpr const char* kStoreFormat = "gazemill-study-store";
inline constexpr std::int64_t kStoreFormatVersion = 3;
/// Version 2 differs only in keeping every string column variable-length
/// (version 3 keeps most fixed-length); both read alike.
inline constexpr std::int64_t kOldestReadableStoreFormat = 2;
/// Marker times absent from a trial are stored as this value.
inline constexpr Microseconds kMissingTime = INT64_MIN;

struct StoreWriteOptions {
  int deflate_level = 1;          // 1 = fastest (ISA-L); 2-9 libdeflate; see bench/ingest for the trade-off
  std::size_t chunk_rows = std::size_t{1} << 16;
};

/// Writes a new version of a store to a temporary file beside `path`;
/// commit() renames it into place. Destroying the writer without commit()
/// removes the temporary file, so a failed run never leaves a store that
/// looks complete, and the previous store stays as it was.
class StudyStoreWriter {
 public:
  /// A new, empty store.
  explicit StudyStoreWriter(std::string path, StoreWriteOptions options = {});
  /// A new version of the store at `path`: its file is copied and then
  /// changed in place (remove() what is replaced, then write).
  static std::unique_ptr<StudyStoreWriter> update(const std::string& path, StoreWriteOptions options = {});
  ~StudyStoreWriter();
  StudyStoreWriter(const StudyStoreWriter&) = delete;
  StudyStoreWriter& operator=(const StudyStoreWriter&) = delete;

  /// Removes an object (group or dataset) by path from the root, if present.
  void remove(const std::string& path);
  bool exists(const std::string& path);

  /// A recording's metadata, messages, trials and sample columns (chunks as compressed).
  void write_recording(const Recording& recording, const SampleSummary& summary, const std::vector<CompressedColumn>& samples,
                       const std::string& ingest_key);
  void write_provenance(const Provenance& provenance);
  /// A recording of another store (a shard) joined to this one: its samples
  /// and sample labels stay in the shard's file, reached by HDF5 external
  /// links (by a path relative to this store when the shard lies below its
  /// folder's parent); everything else is copied.
  void add_linked_recording(const std::string& shard_path, const std::string& id);
  /// Detection results of one recording (remove() the old ones first).
  void write_events(const std::string& recording_id, const DetectedEvents& events, const CompressedColumn& labels,
                    const std::string& method, const std::string& parameters_json, const std::string& detect_key);
  /// The tracker's own events of one recording, beside gazemill's (ingest).
  /// What reading a recording warned of, kept with it (see recording_warnings).
  void write_recording_warnings(const std::string& id, const std::vector<std::string>& warnings);
  void write_tracker_events(const std::string& recording_id, const std::vector<TrackerEvent>& events);
  /// The record of a study stage, replacing any earlier one.
  void write_stage_record(const StageRecord& record);
  /// Marks a stage's record stale (its results are removed by the caller).
  void mark_stage_stale(Stage stage, const std::string& reason);
  /// A group of the new store by path from the root, created (with its parents) if needed.
  H5::Group group(const std::string& path);
  void commit();

  const std::string& temporary_path() const { return temp_path_; }

 private:
  StudyStoreWriter() = default;
  struct Impl;
  std::unique_ptr<Impl> impl_;
  std::string path_;
  std::string temp_path_;
  bool committed_ = false;
};

/// Read access to a store. Throws InputError naming the file and the object
/// when the file is not a gazemill store or a dataset is missing.
class StudyStoreReader {
 public:
  explicit StudyStoreReader(const std::string& path);
  ~StudyStoreReader();
  StudyStoreReader(const StudyStoreReader&) = delete;
  StudyStoreReader& operator=(const StudyStoreReader&) = delete;

  Provenance provenance() const;
  std::vector<std::string> recording_ids() const;
  /// Metadata, messages and trials; samples too when `with_samples`.
  Recording read_recording(const std::string& id, bool with_samples) const;
  SampleSummary sample_summary(const std::string& id) const;
  /// The recording's sample columns as stored (compressed chunks), for decoding off this thread.
  std::vector<CompressedColumn> read_sample_chunks(const std::string& id) const;
  /// A string attribute of /recordings/<id> ("" when absent), e.g. ingest_key.
  std::string recording_attribute(const std::string& id, const std::string& name) const;
  bool has_events(const std::string& id) const;
  /// The detect_key of a recording's events ("" when none).
  std::string events_key(const std::string& id) const;
  DetectedEvents read_events(const std::string& id) const;
  bool has_tracker_events(const std::string& id) const;
  /// The tracker's own events, in time order.
  std::vector<TrackerEvent> read_tracker_events(const std::string& id) const;
  std::vector<SampleLabel> read_sample_labels(const std::string& id) const;
  /// A study stage's record, if it ran.
  std::optional<StageRecord> stage_record(Stage stage) const;
  bool exists(const std::string& path) const;
  /// A group by path from the root; throws InputError naming it when absent.
  H5::Group group(const std::string& path) const;
  const std::string& path() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

/// What reading a recording warned of (its "warnings" attribute), in order; none when absent.
std::vector<std::string> recording_warnings(const StudyStoreReader& store, const std::string& id);

}  // namespace gazemill
