#pragma once
// A recording's sample digest (pipeline/sample_digest.h) in the store, with
// the detection results it belongs to, so that removing them removes it:
//   /recordings/<id>/events/sample_digest   attrs max_points_per_trial, samples, missing_samples,
//                                           trial_samples, trial_missing_samples, intervals,
//                                           irregular_intervals, gaps, non_increasing,
//                                           longest_gap_us, interval_variance_sum_us2, regular_intervals
//   /recordings/<id>/events/sample_digest/{trial_rate_hz,fixation_rms_s2s_deg,fixation_std_deg}
//   /recordings/<id>/events/sample_digest/time_courses/{bin_ms,points}   one row per trial
//   /recordings/<id>/events/sample_digest/time_courses/{x_px,y_px}       the trials' points one after another

#include <optional>
#include <string>

#include "io/study_store.h"
#include "pipeline/sample_digest.h"

namespace gazemill {

/// Written after the recording's events (StudyStoreWriter::write_events).
void write_sample_digest(StudyStoreWriter& store, const std::string& recording_id, const SampleDigest& digest);

/// The digest kept with a recording's events, if its detection made one.
std::optional<SampleDigest> read_sample_digest(const StudyStoreReader& store, const std::string& recording_id);

}  // namespace gazemill
