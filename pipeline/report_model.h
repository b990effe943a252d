#pragma once
// The study report's content as plain values: assembled from the store by
// app/report_data, written as one self-contained HTML page by
// io/report_html. Nothing here knows HTML, JSON or HDF5.
//
// Units are in the names; NaN stands for "no value" in doubles.

#include <cstdint>
#include <limits>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/provenance.h"
#include "pipeline/recording.h"
#include "pipeline/regions.h"
#include "pipeline/text_layout.h"
#include "pipeline/time_units.h"

namespace gazemill {

inline constexpr double kReportNaN = std::numeric_limits<double>::quiet_NaN();

/// Mean, extremes, quartiles and the outer 5 % of a set of values.
struct ValueSummary {
  std::size_t n = 0;
  double mean = kReportNaN;
  double min = kReportNaN, max = kReportNaN;
  double p05 = kReportNaN, q1 = kReportNaN, median = kReportNaN, q3 = kReportNaN, p95 = kReportNaN;
};

/// Counts in equal bins starting at first_edge.
struct Histogram {
  double first_edge = 0;
  double bin_width = 1;
  std::vector<std::uint64_t> counts;
};

/// Counts over x bins by y bins; cell (i, j) at counts[i * y_bins + j].
struct Histogram2D {
  double x_first_edge = 0, x_bin_width = 1;
  double y_first_edge = 0, y_bin_width = 1;
  std::size_t x_bins = 0, y_bins = 0;
  std::vector<std::uint64_t> counts;
};

// --- run summary and provenance ----------------------------------------------

struct ReportStage {
  std::string stage;        // ingest, detect, clean, align, measure
  std::string state;        // current, stale, absent
  std::string created_utc;  // when it ran ("" when absent)
  std::string tool_version;
  std::string settings_json;  // its protocol section, resolved
  std::string protocol_sha256;  // of the whole protocol text it ran with
  std::string note;         // why it is stale
  std::vector<std::string> warnings;  // what it warned of when it ran (current stages)
};

struct ReportRun {
  std::string study_name;
  std::string store_path;
  std::string report_tool_version;  // the gazemill that wrote the report
  std::string report_created_utc;
  std::string store_tool_version;   // the gazemill that ingested
  std::string store_created_utc;
  std::string protocol_path;
  std::string protocol_sha256;
  std::vector<ReportStage> stages;
  std::vector<InputFileRecord> inputs;
  std::vector<RepairRecord> repairs;
  std::vector<std::string> factors;  // the design's factors
  std::vector<std::string> cells;    // every design cell, as cell_text ("condition=rare")
  std::size_t participants = 0, recordings = 0, trials = 0;
  std::uint64_t samples = 0;
  std::uint64_t fixations_detected = 0, saccades_detected = 0, blinks_detected = 0;
  std::uint64_t fixations_kept = 0, trials_kept = 0, participants_kept = 0;
  std::vector<std::string> notes;  // what the report could not show, and why
};

// --- data quality ---------------------------------------------------------------

struct ParticipantQuality {
  std::string participant;
  std::size_t recordings = 0, trials = 0;
  double nominal_rate_hz = kReportNaN;   // as the recordings were read (their median interval at ingest)
  std::uint64_t samples = 0, missing_samples = 0;              // whole recordings; missing: no valid gaze in any recorded eye
  std::uint64_t trial_samples = 0, trial_missing_samples = 0;  // inside trials
  // Sampling regularity over the recordings' timestamps.
  double measured_rate_hz = kReportNaN;
  double interval_sd_us = kReportNaN;
  std::uint64_t intervals = 0, irregular_intervals = 0, gaps = 0, non_increasing = 0;
  Microseconds longest_gap_us = 0;
  // Precision within the detected fixations (degrees); median over fixations and its quartiles.
  std::size_t precision_fixations = 0;
  double rms_s2s_deg = kReportNaN, rms_s2s_q1_deg = kReportNaN, rms_s2s_q3_deg = kReportNaN;
  double std_deg = kReportNaN;
  std::uint64_t repairs = 0;  // at ingest, all kinds
  std::map<std::string, std::uint64_t> repair_kinds;
};

// --- cleaning -------------------------------------------------------------------

struct CleaningRuleInfo {
  std::string name, kind, level;
};

/// One rule at one level in one design cell ("" = all cells together), summed over participants.
struct CleaningFlowRow {
  std::string level;  // sample, fixation, trial, participant
  std::string cell;   // cell_text, or "" for all
  std::size_t rule = 0;
  std::uint64_t input = 0;  // items of this level in this cell before any rule
  std::uint64_t removed_sequential = 0, removed_alone = 0;
  std::uint64_t merged_sequential = 0;
  std::uint64_t remaining = 0;  // after this rule and every rule before it
};

/// What one rule removed of one participant's items at one level (sequential attribution).
struct CleaningParticipantRow {
  std::string participant;
  std::string level;
  std::size_t rule = 0;
  std::uint64_t removed_sequential = 0;
  std::uint64_t input = 0;
};

struct CleaningSummary {
  bool present = false;
  std::vector<CleaningRuleInfo> rules;
  std::vector<CleaningFlowRow> flow;
  std::vector<CleaningParticipantRow> participants;
  std::map<std::string, std::uint64_t> input, kept;  // by level, every cell
};

// --- detection ------------------------------------------------------------------

struct ParticipantEvents {
  std::string participant;
  std::size_t trials = 0;
  std::uint64_t fixations = 0, saccades = 0, blinks = 0;
  double fixations_per_trial = kReportNaN;
  double median_fixation_ms = kReportNaN;
  double median_amplitude_deg = kReportNaN;
  double median_velocity_ratio = kReportNaN;   // peak velocity / the main-sequence reference at its amplitude
  double regression_share = kReportNaN;        // saccades leftwards, of all saccades
  // Robust z-scores of the four figures above, across participants (NaN when undefined).
  double z_fixations_per_trial = kReportNaN, z_median_fixation = kReportNaN, z_median_amplitude = kReportNaN;
  double z_velocity_ratio = kReportNaN, z_regression_share = kReportNaN;
  bool outlying = false;  // any figure apart (DetectionSummary::outlier_z and outlier_relative)
};

struct MainSequenceReference {
  double v_max_low_deg_s = 500, v_max_high_deg_s = 700, c_deg = 14;  // methods.md §6: a plausibility band
  std::vector<double> amplitude_deg, low_deg_s, high_deg_s;
};

struct DetectionSummary {
  bool present = false;
  std::string method;
  Histogram fixation_duration_ms;       // every detected fixation
  Histogram kept_fixation_duration_ms;  // after cleaning (when clean ran)
  Histogram saccade_amplitude_deg;
  Histogram2D main_sequence;            // amplitude (deg) x peak velocity (deg/s)
  MainSequenceReference reference;
  double outlier_z = 3.0;          // apart: |robust z| above this ...
  double outlier_relative = 0.10;  // ... and more than this fraction from the median
  std::vector<ParticipantEvents> participants;
};

// --- drift correction -------------------------------------------------------------

struct AlignedTrialRow {
  std::string participant, recording, trial, item, cell;
  std::string method;
  double confidence = kReportNaN;
  bool flagged = false;
};

struct ParticipantAlignment {
  std::string participant;
  std::size_t trials = 0, flagged = 0;
  ValueSummary confidence;
};

struct DriftSummary {
  bool present = false;
  std::vector<std::string> methods;  // as recorded per trial, distinct
  Histogram confidence;               // all trials
  Histogram flagged_confidence;       // flagged trials
  std::size_t trials = 0, flagged = 0;
  std::vector<ParticipantAlignment> participants;
  std::vector<AlignedTrialRow> flagged_trials;  // lowest confidence first
};

// --- measures ---------------------------------------------------------------------

/// A duration measure in one region role and design cell, over participant x trial x region rows.
struct MeasureDistribution {
  std::string measure, role, cell;  // role "" = regions without a role
  ValueSummary summary;
};

/// One participant's mean of a measure in a role and cell.
struct ParticipantMeasureMean {
  std::string participant, measure, role, cell;
  double mean_ms = kReportNaN;
  std::size_t n = 0;
};

/// A probability per region role and design cell: pooled from /measures/by_role and per participant.
struct RoleProbability {
  std::string role, cell, measure;  // skipping, regression_out, regression_in
  double probability = kReportNaN;
  std::size_t denominator = 0;
};
struct ParticipantProbability {
  std::string participant, role, cell, measure;
  double probability = kReportNaN;
  std::size_t denominator = 0;
};

struct MeasuresSummary {
  bool present = false;
  std::vector<std::string> measures;  // first_fixation_ms, gaze_duration_ms, go_past_ms, total_time_ms
  std::vector<std::string> roles;     // in the order shown ("" last: regions without a role)
  std::vector<MeasureDistribution> distributions;
  std::vector<ParticipantMeasureMean> participant_means;
  std::vector<RoleProbability> probabilities;
  std::vector<ParticipantProbability> participant_probabilities;
  std::size_t rows = 0;  // participant x trial x region rows
};

// --- the trial viewer -----------------------------------------------------------

/// An item as it was shown: lines, region boxes and the words with where they start.
struct ViewerLayout {
  std::string item, cell;
  std::vector<LineInfo> lines;
  std::vector<RegionInfo> regions;
  struct PlacedWord {
    std::string text;
    int line = 0;
    double left_px = 0;  // of its first character
  };
  std::vector<PlacedWord> words;  // empty for a boxes file (no text known)
};

struct ViewerFixation {
  double start_ms = 0;  // from the trial's start
  double duration_ms = 0;
  double x_px = 0, y_px = 0;
  int line = -1;                      // line drift correction put it on (0-based), -1 none or not aligned
  double corrected_y_px = kReportNaN;
  int removed_by = -1;                // index of the cleaning rule that removed it, -1 kept
  bool merged = false;                // removed by joining another fixation
};

struct ViewerTrial {
  std::string trial, item, cell;
  int layout = -1;  // index into ReportViewer::layouts, -1 unknown
  double duration_ms = 0;
  bool kept = true;
  std::string removed_by_rule, removed_reason;
  std::string align_method;
  double align_confidence = kReportNaN;
  bool align_flagged = false;
  std::vector<ViewerFixation> fixations;  // kept and removed, in time order
  double bin_ms = 0;                       // the time course: one value per bin from the trial's start
  std::vector<float> x_px, y_px;           // whole pixels, NaN where a bin had no valid sample
};

/// A recording's trials as the page carries them (io/report_html.h,
/// pack_viewer_recording): packed as soon as the recording is assembled, so
/// that a long study's report holds its trials compressed, not whole.
struct PackedViewerTrials {
  std::string block;  // the page's text for them
  std::size_t trials = 0, kept_trials = 0;
};

struct ViewerRecording {
  std::string id, participant, session;
  std::vector<ViewerTrial> trials;          // empty once packed
  std::optional<PackedViewerTrials> packed;
};

struct ReportViewer {
  bool present = false;
  int screen_width_px = 0, screen_height_px = 0;
  TextLayoutSpec text;                    // char width and advances, for placing characters
  std::vector<std::string> rules;         // cleaning rule names, indexed by ViewerFixation::removed_by
  std::vector<ViewerLayout> layouts;
  std::vector<ViewerRecording> recordings;
};

struct ReportModel {
  ReportRun run;
  std::vector<ParticipantQuality> quality;
  CleaningSummary cleaning;
  DetectionSummary detection;
  DriftSummary drift;
  MeasuresSummary measures;
  ReportViewer viewer;
};

}  // namespace gazemill
