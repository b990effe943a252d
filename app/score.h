#pragma once
// score: how well a detector agrees with a reference labelling, either the
// simulator's ground truth or any labelled recording in a delimited file.

#include <CLI/CLI.hpp>

#include <map>
#include <ostream>
#include <string>

#include "detectors/scoring.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// The options of `gazemill score`.
struct ScoreOptions {
  std::string simulated_folder;
  std::string labelled_file;
  std::string protocol;           // detection settings (and screen) from a protocol
  std::string method;             // or from the command line
  std::vector<std::string> params;  // NAME=VALUE
  std::string codes;              // CODE=CLASS,...
  std::string codes_file;         // or a TOML file with a [codes] table
  std::string columns = "time,x,y,label";
  std::string delimiter = "tab";
  std::string time_unit = "ms";
  std::string screen_px;          // WIDTHxHEIGHT
  std::string screen_mm;          // WIDTHxHEIGHT
  double distance_mm = 0;
  double rate_hz = 0;
  std::string json_out;
};


/// A plain labelled recording: one delimited file with time, x, y and label columns.
struct LabelledFileSpec {
  std::string path;
  char delimiter = '\t';
  std::string time_column = "time", x_column = "x", y_column = "y", label_column = "label";
  TimeUnit time_unit = TimeUnit::milliseconds;
  std::map<std::string, SampleLabel> codes;  // label text in the file -> class
  ScreenGeometry screen;
  double sample_rate_hz = 0;  // 0 = from the timestamps
};

/// Parses "1=fixation,2=saccade,..." (classes: fixation, saccade, pso, blink, loss, other).
/// Throws InputError naming the option on a bad entry.
std::map<std::string, SampleLabel> parse_label_codes(const std::string& text);
/// Reads the same mapping from a small TOML file: a [codes] table, e.g. "1" = "fixation".
/// Throws InputError naming the file, line and key on a bad entry.
std::map<std::string, SampleLabel> read_label_codes_file(const std::string& path);

/// Scores `detection` on a simulated study folder (ingested into a temporary store).
AgreementReport score_simulated_study(const std::string& folder, const DetectionSpec& detection);

/// Scores `detection` on a labelled file.
AgreementReport score_labelled_file(const LabelledFileSpec& file, const DetectionSpec& detection);

void print_agreement(const AgreementReport& report, std::ostream& out);
std::string agreement_json(const AgreementReport& report, const DetectionSpec& detection);

/// Adds the score subcommand, its options stored in `options`.
void register_score_command(CLI::App& app, ScoreOptions& options);
/// Runs it; returns the exit code. Throws InputError on bad input.
int run_score(const ScoreOptions& options);

}  // namespace gazemill
