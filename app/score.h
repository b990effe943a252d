#pragma once
// score: how well a detector agrees with a reference labelling, either the
// simulator's ground truth or a corpus of labelled recordings in delimited
// files (per file and pooled).

#include <CLI/CLI.hpp>

#include <cstdint>
#include <map>
#include <optional>
#include <ostream>
#include <string>
#include <vector>

#include "detectors/scoring.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// The options of `gazemill score`.
struct ScoreOptions {
  std::string simulated_folder;
  std::string store;              // --store: the tracker's own events against gazemill's detection
  std::vector<std::string> labelled;  // files or glob patterns
  std::string protocol;           // detection settings, [input.table] reading settings and screen from a protocol
  std::string method;             // or from the command line
  std::vector<std::string> params;  // NAME=VALUE
  std::optional<double> pursuit_dispersion_deg, pursuit_window_ms;  // [detection.pursuit] from the command line
  std::string pso;                // how post-saccadic oscillation is reported: separate, fixation, saccade
  std::string codes;              // CODE=CLASS,...
  std::string codes_file;         // or a TOML file with a [codes] table
  std::string columns = "time,x,y,label";
  // Reading settings; empty (or false) = the protocol's [input.table], else the TableLayout defaults.
  std::string delimiter;
  std::string time_unit;
  std::vector<std::string> missing_values;
  bool zero_gaze_is_missing = false;
  std::string screen_px;          // WIDTHxHEIGHT
  std::string screen_mm;          // WIDTHxHEIGHT
  double distance_mm = 0;
  double rate_hz = 0;
  std::string json_out;
  // --lines: drift correction instead of detection, on a simulated study.
  bool lines = false;
  std::vector<std::string> line_methods;  // empty = every method
};

/// How to read a labelled recording: one delimited file with time, x, y and
/// label columns, read with the same settings as a protocol's [input.table].
struct LabelledFileSpec {
  std::string path;
  char delimiter = '\t';
  std::string comment_prefix;
  std::string time_column = "time", x_column = "x", y_column = "y", label_column = "label";
  TimeUnit time_unit = TimeUnit::milliseconds;
  std::vector<std::string> missing_values{"", "NaN", "nan", "NA", "."};
  bool zero_gaze_is_missing = false;  // (0, 0) gaze is lost tracking
  std::map<std::string, SampleLabel> codes;  // label text in the file -> class; other texts count as "other"
  ScreenGeometry screen;
  double sample_rate_hz = 0;  // 0 = from the timestamps
};

/// One labelled file's agreement, and the label texts it held that have no
/// class (each counted as "other", with its number of samples).
struct LabelledFileScore {
  std::string path;
  AgreementReport report;
  std::map<std::string, std::uint64_t> unmapped_codes;
};

/// Every file's agreement and the pooled agreement (kappa from the summed
/// confusion matrix, event figures from the summed counts).
struct LabelledCorpusScore {
  std::vector<LabelledFileScore> files;
  AgreementReport pooled;
  std::map<std::string, std::uint64_t> unmapped_codes;  // over all files
};

/// Parses "1=fixation,2=saccade,..." (classes: fixation, saccade, pso, blink, loss, other).
/// Throws InputError naming the option on a bad entry.
std::map<std::string, SampleLabel> parse_label_codes(const std::string& text);
/// Reads the same mapping from a small TOML file: a [codes] table, e.g. "1" = "fixation".
/// Throws InputError naming the file, line and key on a bad entry.
std::map<std::string, SampleLabel> read_label_codes_file(const std::string& path);

/// Files named by `patterns` (plain paths or glob patterns), sorted, each
/// once. Throws InputError naming --labelled when a pattern matches nothing.
std::vector<std::string> expand_labelled_files(const std::vector<std::string>& patterns);

/// Scores `detection` on a simulated study folder (ingested into a temporary store).
AgreementReport score_simulated_study(const std::string& folder, const DetectionSpec& detection);

/// Scores `detection` on one labelled file (`file.path`).
LabelledFileScore score_labelled(const LabelledFileSpec& file, const DetectionSpec& detection);
/// The same, agreement only.
AgreementReport score_labelled_file(const LabelledFileSpec& file, const DetectionSpec& detection);
/// Scores `detection` on every file of `paths`, each read with `settings`
/// (its path ignored), per file and pooled.
LabelledCorpusScore score_labelled_corpus(const std::vector<std::string>& paths, const LabelledFileSpec& settings,
                                          const DetectionSpec& detection);

void print_agreement(const AgreementReport& report, std::ostream& out);
void print_corpus(const LabelledCorpusScore& corpus, std::ostream& out);
/// The results as JSON: detection settings, the pooled agreement, one entry
/// per file (none for a simulated study) and the label texts without a
/// class. Undefined figures are null.
std::string agreement_json(const AgreementReport& pooled, const DetectionSpec& detection,
                           const LabelledCorpusScore* corpus = nullptr);

/// Adds the score subcommand, its options stored in `options`.
void register_score_command(CLI::App& app, ScoreOptions& options);
/// Runs it; returns the exit code. Throws InputError on bad input.
int run_score(const ScoreOptions& options);

/// The tracker's own events a store keeps beside gazemill's (BIDS physio
/// events mapped in [input.bids.tracker_events]) as the reference against
/// gazemill's detected labels, trial by trial, in the eye detection used.
/// Throws InputError when no recording keeps them or one is not detected.
AgreementReport score_tracker_events(const std::string& store_path);

}  // namespace gazemill
