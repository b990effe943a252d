#pragma once
// The HDF5 study store: one file per study, a group per recording.
//
// Layout (format "gazemill-study-store", version 1):
//   /                                  attrs format, format_version
//   /provenance                        attrs gazemill_version, protocol_path, protocol_text,
//                                      protocol_sha256, created_utc
//   /provenance/inputs/{path,size_bytes,sha256,recording}
//   /provenance/repairs/{recording,kind,count}
//   /recordings/<id>                   attrs participant, session, source_file, sample_rate_hz,
//                                      eyes, screen_*, sample_count, missing_left, missing_right,
//                                      first_time_us, last_time_us
//   /recordings/<id>/samples/time_us   int64, unit "us"
//   /recordings/<id>/samples/<eye>_x_px, <eye>_y_px (float32, "px"), <eye>_pupil (float32,
//                                      "tracker units"), <eye>_valid (uint8)   eye = left|right
//   /recordings/<id>/messages/{time_us,text}
//   /recordings/<id>/trials/{id,start_us,end_us,item,condition}
//   /recordings/<id>/trials/variables/<name>       strings, one per trial ("" when unset)
//   /recordings/<id>/trials/markers/<name>_us      int64, one per trial, kMissingTime when unset
//   /recordings/<id>/events                        written by detect; attrs method, parameters (JSON)
//   /recordings/<id>/events/sample_label           uint8 per sample: 0 fixation, 1 saccade, 2 pso,
//                                                  3 blink, 4 loss, 5 other (outside trials, unclassified)
//   /recordings/<id>/events/fixations/{trial,eye,start_us,end_us,duration_ms,x_px,y_px,x_median_px,
//                                      y_median_px,x_deg,y_deg,dispersion_deg}
//   /recordings/<id>/events/saccades/{trial,eye,start_us,end_us,start_x_px,start_y_px,end_x_px,end_y_px,
//                                     amplitude_deg,peak_velocity_deg_s,direction_deg}
//   /recordings/<id>/events/blinks/{trial,eye,start_us,end_us}
//   /recordings/<id>/events/trials/{trial,eye,<fitted>}  one row per trial: the eye used and each value the
//                                                  detector set from the trial's own data (float64 with
//                                                  its unit, NaN where not set), e.g. dispersion_threshold_deg
//   /provenance/stages/<stage>                     attrs gazemill_version, protocol_path, protocol_text,
//                                                  protocol_sha256, created_utc, settings (JSON) of each derived stage
// Every numeric dataset is chunked, shuffled and deflated, with a "unit" attribute.

#include <H5Cpp.h>

#include <memory>
#include <string>
#include <vector>

#include "pipeline/events.h"
#include "pipeline/provenance.h"
#include "pipeline/recording.h"
#include "pipeline/sample_sink.h"

namespace gazemill {

inline constexpr const char* kStoreFormat = "gazemill-study-store";
inline constexpr std::int64_t kStoreFormatVersion = 1;
/// Marker times absent from a trial are stored as this value.
inline constexpr Microseconds kMissingTime = INT64_MIN;

struct StoreWriteOptions {
  int deflate_level = 1;          // 1 = fastest (ISA-L); 2-9 libdeflate; see bench/ingest for the trade-off
  unsigned long chunk_rows = 1 << 16;
  unsigned compression_threads = 0;  // 0 = one per core
};

/// Writes a new store to a temporary file beside `path`; commit() renames it
/// into place. Destroying the writer without commit() removes the temporary
/// file, so a failed run never leaves a store that looks complete.
class StudyStoreWriter {
 public:
  explicit StudyStoreWriter(std::string path, StoreWriteOptions options = {});
  ~StudyStoreWriter();
  StudyStoreWriter(const StudyStoreWriter&) = delete;
  StudyStoreWriter& operator=(const StudyStoreWriter&) = delete;

  /// A sink streaming one recording's samples into the store.
  std::unique_ptr<SampleSink> begin_samples(const std::string& recording_id, bool left, bool right);
  /// Finishes the samples of `recording` (begin_samples first) and writes its
  /// metadata, messages and trials. recording.samples is ignored.
  void write_recording(const Recording& recording, const SampleSummary& summary);
  void write_provenance(const Provenance& provenance);
  void commit();

  /// A writer for a new version of an existing store: everything is copied
  /// (compressed chunks as they are) except each recording's `replaced`
  /// children, top-level groups named "/name" in `replaced`, and
  /// /provenance/stages/`stage`; commit() replaces the store.
  static std::unique_ptr<StudyStoreWriter> derive(const std::string& store_path, const std::vector<std::string>& replaced,
                                                  const std::string& stage);
  /// Detection results of one recording (replacing nothing; use derive()).
  void write_events(const std::string& recording_id, const DetectedEvents& events, const std::vector<SampleLabel>& labels,
                    const std::string& method, const std::string& parameters_json);
  /// Provenance of a derived stage.
  void write_stage_provenance(const std::string& stage, const StageProvenance& provenance);
  /// A group of the new store by path from the root, created (with its parents) if needed.
  H5::Group group(const std::string& path);

  const std::string& temporary_path() const { return temp_path_; }

 private:
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
  bool has_events(const std::string& id) const;
  DetectedEvents read_events(const std::string& id) const;
  std::vector<SampleLabel> read_sample_labels(const std::string& id) const;
  /// Provenance of a derived stage; throws InputError when the stage has not run.
  StageProvenance stage_provenance(const std::string& stage) const;
  bool exists(const std::string& path) const;
  /// A group by path from the root; throws InputError naming it when absent.
  H5::Group group(const std::string& path) const;
  const std::string& path() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace gazemill
