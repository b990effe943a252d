#pragma once
// score: how well a detector agrees with a reference labelling, either the
// simulator's ground truth or any labelled recording in a delimited file.

#include <map>
#include <ostream>
#include <string>

#include "detectors/scoring.h"
#include "pipeline/protocol.h"

namespace gazemill {

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

}  // namespace gazemill
