#pragma once
// The protocol model: everything a run needs to know, filled from the
// protocol file by app/protocol_parser and trusted by the stages.

#include <map>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/recording.h"
#include "pipeline/text_layout.h"
#include "pipeline/time_units.h"

namespace gazemill {

/// Samples from a delimited export or a BIDS dataset, or fixations a lab
/// already has (its recording software's or another tool's fixation list).
enum class InputFormat { delimited, bids, fixations };

/// Header names of one eye's columns in a delimited file.
struct EyeColumnNames {
  std::string x;
  std::string y;
  std::string pupil;  // empty when the file has no pupil column for this eye
};

/// How to read the sample table of a delimited export.
struct TableLayout {
  char delimiter = '\t';
  std::string comment_prefix;  // lines starting with it are skipped; empty = none
  std::string time_column;
  TimeUnit time_unit = TimeUnit::milliseconds;
  std::optional<EyeColumnNames> left;
  std::optional<EyeColumnNames> right;
  std::string message_column;  // a column holding message text; empty = none
  // Field texts read as "no value". Matched exactly, after trimming spaces.
  // "NaN", "nan" and "inf" are not among the defaults: they read as numbers
  // that are not finite, are missing too, and are counted as a repair
  // (non_finite_gaze_read_as_missing) so that a file full of them is noticed.
  std::vector<std::string> missing_values{"", "NA", "."};
  // Some trackers write (0, 0) for lost gaze; when true such samples are missing.
  bool zero_gaze_is_missing = false;
  // A column of the tracker's own judgement of each sample (a status or
  // validity code); rows whose trimmed text is one of invalid_status are
  // missing, counted as status_invalid_read_as_missing. "" = none.
  std::string status_column;
  std::vector<std::string> invalid_status;
};

/// Messages kept in a file of their own beside each sample file.
struct MessageFileSpec {
  // Path with placeholders: {dir} (the sample file's folder), {name} (its file
  // name), {stem} (the name without its last extension, and without .gz), and
  // any named capture of the file-name pattern, e.g. {participant}.
  std::string path_template;
  char delimiter = '\t';
  std::string time_column;
  std::string text_column;
  // The unit of time_column; unset = the samples' unit (input.table.time_unit,
  // or input.fixations.time_unit for fixation lists).
  std::optional<TimeUnit> time_unit;
};

enum class DuplicateTimestampPolicy { error, keep_first };
enum class UnterminatedTrialPolicy { error, drop };
enum class TrialsWithoutSamplesPolicy { error, drop };

/// What ingest may repair instead of failing; every repair is counted and stored.
struct RepairPolicy {
  DuplicateTimestampPolicy duplicate_timestamps = DuplicateTimestampPolicy::error;
  UnterminatedTrialPolicy unterminated_trials = UnterminatedTrialPolicy::error;
  // A trial with no sample between its start and end (its messages outside
  // the recording, e.g. read in the wrong time unit) is an error, or is left
  // out and counted.
  TrialsWithoutSamplesPolicy trials_without_samples = TrialsWithoutSamplesPolicy::error;
};

/// BIDS eye-tracking input: column names for datasets that depart from the
/// specification's (BIDS v1.11.0, "Eye-tracking": timestamp, x_coordinate,
/// y_coordinate, pupil_size), and the tracker's own events to keep.
struct BidsInputSpec {
  std::string timestamp_column = "timestamp";
  std::string x_column = "x_coordinate";
  std::string y_column = "y_coordinate";
  std::string pupil_column = "pupil_size";  // optional unless named in the protocol
  bool pupil_column_named = false;          // the protocol named it: it must be in Columns
  bool gaze_in_pixels = false;              // the gaze columns are screen pixels whatever their Units say
  bool zero_gaze_is_missing = false;        // (0, 0) gaze is lost tracking
  // Rows of the *_physioevents files that are the tracker's own fixations,
  // saccades and blinks: a pattern per kind on one column; "" = not kept.
  std::string tracker_event_column = "trial_type";
  std::string tracker_fixation_pattern;
  std::string tracker_saccade_pattern;
  std::string tracker_blink_pattern;
  bool keeps_tracker_events() const {
    return !tracker_fixation_pattern.empty() || !tracker_saccade_pattern.empty() || !tracker_blink_pattern.empty();
  }
};

/// How to read a delimited fixation list (format = "fixations"): one
/// fixation per row; rows with a message instead are messages at their
/// start time. Read as the detected events: there are no samples.
struct FixationListSpec {
  char delimiter = '\t';
  TimeUnit time_unit = TimeUnit::milliseconds;  // of start, end and duration
  std::string start_column;                     // required
  std::string end_column;                       // exactly one of end_column ...
  std::string duration_column;                  // ... and duration_column
  std::string x_column;                         // mean position, px (required)
  std::string y_column;
  std::string pupil_column;                     // optional; "" = none
  std::string eye_column;                       // optional; "" = every row is `eye`'s
  std::string left_value = "left";              // the eye column's texts for each eye
  std::string right_value = "right";
  std::optional<Eye> eye;                       // without eye_column: required; with it: keep only this eye's rows
  std::string message_column;                   // optional: a row with a text here is a message, not a fixation
  std::vector<std::string> missing_values{"", "NaN", "nan", "NA", "."};
};

struct InputSpec {
  InputFormat format = InputFormat::delimited;
  std::vector<std::string> files;     // glob patterns, relative to the protocol's folder
  // Named captures participant / session (optional), searched in the file
  // name first and in the whole path when the name does not match.
  std::string filename_pattern;
  std::size_t filename_pattern_line = 0;  // where it is in the protocol file, for errors (0: BIDS's own)
  TableLayout table;                  // delimited only
  std::optional<MessageFileSpec> message_file;
  RepairPolicy repairs;
  double sample_rate_hz = 0.0;        // 0 = estimate from the median sample interval
  std::size_t sample_rate_line = 0;   // where it is in the protocol file, for errors
  // Gaze farther off the screen than this, in px beyond any edge, is read as
  // missing and counted (offscreen_gaze_read_as_missing). 200 px is about
  // 4.5 deg at 1920 px over 531 mm seen from 700 mm, and still about 2 deg on
  // a 4K screen of that size: several times the 0.5-1 deg accuracy of a
  // calibrated tracker, so gaze near an edge that calibration error puts just
  // outside is kept, while values hundreds of pixels off (track loss, lid
  // artefacts, placeholder values) are no look at the display (common
  // practice, no source). Infinity turns the check off. Sample input only
  // (delimited and BIDS, whose gaze is in pixels); fixation lists are kept as they are.
  double offscreen_margin_px = 200.0;
  BidsInputSpec bids;                 // bids only
  FixationListSpec fixations;         // fixations only
};

/// Where trials come from: message patterns, the rows of the BIDS task
/// *_events.tsv, or the lab's own trial table beside each recording.
enum class TrialSource { messages, events, table };

/// Trial segmentation.
struct TrialSegmentationSpec {
  TrialSource source = TrialSource::messages;
  // from = "messages":
  std::string start_pattern;  // must match the trial's first message; capture (?<trial>...) optional
  std::string end_pattern;    // must match its last message
  // Patterns matched against every message of a trial. Every named capture of
  // these and of the start and end patterns sets the trial variable of that
  // name, except (?<trial>...), the trial's id.
  std::vector<std::string> variable_patterns;
  // Named time points: the first message of a trial matching the pattern sets it.
  std::map<std::string, std::string> marker_patterns;
  std::size_t variables_line = 0;                    // where each is in the protocol file, for errors
  std::map<std::string, std::size_t> marker_lines;

  // from = "events" or "table": each row a trial, every other column a trial variable.
  std::string trial_type_pattern;    // events: only rows whose trial_type matches; "" = every row
  std::string trial_column;          // the column naming each trial; "" = numbered 1, 2, ... in row order
  std::vector<std::string> columns;  // the variables the table must have; empty = any (checked at ingest)
  bool until_next = false;           // a trial lasts until the next row's start, not for its duration
  // from = "table" only:
  std::string table_template;        // path with the placeholders of input.messages.file
  char table_delimiter = '\t';
  TimeUnit table_time_unit = TimeUnit::milliseconds;
  std::string start_column = "start";
  std::string end_column = "end";            // used when the table has it, else duration_column
  std::string duration_column = "duration";
  bool table_times_from_first_sample = false;  // times count from the recording's first sample, not on its clock
};

/// Which eye's data the events come from when both were recorded.
enum class EyeChoice { left, right, best, average };

/// Where post-saccadic oscillation (glissade) samples go: a class of their
/// own, or folded into the fixation after them or the saccade before them.
enum class PsoHandling { separate, fixation, saccade };

/// Event detection: the method by name with its parameters (units in the
/// names), what counts as a blink, and the shared minimum durations.
struct DetectionSpec {
  // ivt, idt, engbert_kliegl, nystrom_holmqvist. The adaptive method of
  // Nystrom & Holmqvist agreed best with an expert coder and labels glissades
  // (bench/realdata; README, "Event detection").
  std::string method = "nystrom_holmqvist";
  std::map<std::string, double> parameters;    // method parameters; unset ones keep their defaults
  std::string velocity = "savitzky_golay";     // ivt only: savitzky_golay, moving_average_5, two_point
  EyeChoice eye = EyeChoice::best;
  double interpolate_max_ms = 0.0;             // fill gaps up to this long before detection; 0 = never
  double blink_min_ms = 70.0;                  // blinks hide the pupil for 100-400 ms (common practice, no source)
  double blink_max_ms = 500.0;
  // The lid artefacts join a blink as far as the gaze moves faster than in a
  // fixation, no further than these (event_detector.h, BlinkParams).
  double blink_padding_before_ms = 50.0;
  double blink_padding_after_ms = 100.0;
  double min_fixation_ms = 40.0;
  double min_saccade_ms = 10.0;
  double max_velocity_deg_s = 1000.0;
  double max_fixation_gap_ms = 20.0;           // a fixation continues across a shorter loss
  double max_fixation_gap_shift_deg = 0.5;     // ... when the gaze on both sides is this close
  double spike_deg = 1.0;                      // single-sample spikes larger than this are removed; 0 = off
  PsoHandling pso = PsoHandling::separate;     // kept apart, as hand coders and Nystrom & Holmqvist (2010) do
  // [detection.pursuit]: smooth pursuit apart from fixations by I-VDT's
  // dispersion stage (Komogortsev & Karpov 2013); 0 = off, the default:
  // readers rarely pursue, and every fixation sample it takes is lost to the
  // reading measures (README, "Event detection").
  double pursuit_dispersion_deg = 0.0;
  double pursuit_window_ms = 100.0;
};

/// Where the regions of every item are, and how fixations are assigned to them.
struct RegionSpec {
  std::string boxes_file;  // item, [a column per design factor], region, label, left_px, top_px, right_px, bottom_px, line, [role], [letters], [words]
  std::string items_file;  // item, [a column per design factor], text with '/' between regions, [roles] e.g. "3=target 4=spillover"
  TextLayoutSpec layout;   // for items_file; char_width_px also gives landing positions for boxes
  bool off_line_nearest = true;       // a fixation between lines goes to the nearest line ...
  double max_line_distance_px = 0;    // ... within this distance of its centre (0 = one line height)
  bool margin_nearest = true;         // a fixation left or right of a line's text goes to its first/last region ...
  double margin_px = 0;               // ... within this distance (0 = two characters)
  bool present() const { return !boxes_file.empty() || !items_file.empty(); }
};

/// Drift correction: the method that gives every kept fixation its text line
/// (Carr, Pescuma, Furlan, Ktori & Crepaldi 2022), and when a trial is
/// flagged for a person to look at.
struct AlignmentSpec {
  std::string method = "majority";           // a method of alignment/drift_registry.h
  std::vector<std::string> members;          // for majority: its members in tie order (empty = the default five)
  std::map<std::string, double> parameters;  // the method's, with units in their names ("<member>.<name>" for majority)
  double min_confidence = 0.8;               // trials below are flagged (confidence 0..1, as the method defines it)
  double font_height_px = 0;                 // chain's thresholds are multiples of it; 0 = half the line height
  std::string review_file;                   // a person's decisions on flagged trials; "" = none
};

/// One cleaning rule as written in the protocol: a name the lab chooses, a
/// kind, and parameters with their units in their names.
struct CleaningRuleSpec {
  std::string name;
  std::string kind;
  std::map<std::string, double> numbers;
  std::map<std::string, std::string> texts;
  std::size_t line = 0;  // where the rule starts in the protocol file
  std::map<std::string, std::size_t> key_lines;  // where each parameter is, for errors about its value
  std::size_t line_of(const std::string& key) const {
    const auto k = key_lines.find(key);
    return k == key_lines.end() ? line : k->second;
  }
};

/// The experimental design: which trial variable names the item, and which
/// are the design's factors (any number: 2 x 2 and beyond). Regions may vary
/// by any of the factors; audits and aggregates break down by all of them.
struct DesignSpec {
  std::string item_variable = "item";
  std::vector<std::string> factors;
  // A factor's levels, when the protocol lists them ([design.levels]): a trial
  // with another value is an error, not a new design cell (a typo would be one).
  std::map<std::string, std::vector<std::string>> levels;
  std::map<std::string, std::size_t> levels_lines;  // where each list is in the protocol file
};

struct Protocol {
  std::string path;        // where it was read from
  std::string text;        // the exact file text, stored in provenance
  std::string study_name;
  InputSpec input;
  std::optional<ScreenGeometry> screen;  // required for delimited input
  TrialSegmentationSpec trials;
  DesignSpec design;
  DetectionSpec detection;
  std::vector<CleaningRuleSpec> cleaning;  // applied in this order
  RegionSpec regions;
  AlignmentSpec alignment;
};

}  // namespace gazemill
