// gazemill_measure_scanpaths: feeds scanpaths to gazemill::reading_measures
// and prints every field of the RegionMeasures it returns, so that an
// independent implementation (tests/python/reading_measures_oracle.py) can be
// compared with the library row by row. It only parses and prints: nothing
// here computes a measure.
//
// Input (a file argument, or standard input), tab-separated, one trial a line:
//   trial, region_count, char_width_px, then per fixation in time order
//   duration_ms, x_px, y_px, x_deg, y_deg, line, region, landing_chars
// region -1 means off the regions; landing_chars may be NA. A first line
// starting with "trial" is a header and is skipped; empty lines are skipped.
//
// Output (standard output), tab-separated with a header: trial, region,
// fixated, skipped, then the fields of RegionMeasures in declaration order.
// Missing values are NA, booleans 0/1, numbers with 17 significant digits.
// Exit 2 on malformed input, naming the line.

#include <cstdio>
#include <fstream>
#include <iostream>
#include <optional>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

#include "measures/reading_measures.h"

namespace {

std::vector<std::string> split_tabs(const std::string& line) {
  std::vector<std::string> fields;
  std::size_t start = 0;
  while (true) {
    const std::size_t tab = line.find('\t', start);
    fields.push_back(line.substr(start, tab == std::string::npos ? std::string::npos : tab - start));
    if (tab == std::string::npos) break;
    start = tab + 1;
  }
  return fields;
}

double number(const std::string& text) {
  std::size_t used = 0;
  const double value = std::stod(text, &used);
  if (used != text.size()) throw std::invalid_argument("not a number: " + text);
  return value;
}

int integer(const std::string& text) {
  std::size_t used = 0;
  const int value = std::stoi(text, &used);
  if (used != text.size()) throw std::invalid_argument("not an integer: " + text);
  return value;
}

std::string format(double value) {
  char buffer[40];
  std::snprintf(buffer, sizeof buffer, "%.17g", value);
  return buffer;
}
std::string format(const std::optional<double>& value) { return value ? format(*value) : "NA"; }
std::string format(const std::optional<bool>& value) { return value ? (*value ? "1" : "0") : "NA"; }
std::string format(bool value) { return value ? "1" : "0"; }
std::string format(int value) { return std::to_string(value); }

constexpr int fields_per_fixation = 8;

}  // namespace

int main(int argc, char** argv) {
  std::ifstream file;
  if (argc > 2) {
    std::cerr << "usage: gazemill_measure_scanpaths [SCANPATHS.tsv]\n";
    return 2;
  }
  if (argc == 2) {
    file.open(argv[1]);
    if (!file) {
      std::cerr << "cannot open " << argv[1] << "\n";
      return 2;
    }
  }
  std::istream& in = argc == 2 ? static_cast<std::istream&>(file) : std::cin;
  std::ostringstream out;
  out << "trial\tregion\tfixated\tskipped\tfirst_fixation_ms\tsingle_fixation_ms\tgaze_duration_ms\tgo_past_ms"
         "\tselective_go_past_ms\ttotal_time_ms\trereading_ms\tsecond_pass_ms\tfirst_pass_fixations\ttotal_fixations"
         "\tregression_out\tregression_in\tlanding_chars\tincoming_saccade_chars\tincoming_saccade_deg\n";
  std::string line;
  long line_number = 0;
  while (std::getline(in, line)) {
    ++line_number;
    if (line.empty() || (line_number == 1 && line.rfind("trial", 0) == 0)) continue;
    try {
      const auto f = split_tabs(line);
      if (f.size() < 3 || (f.size() - 3) % fields_per_fixation != 0)
        throw std::invalid_argument("expected 3 + 8 per fixation fields, got " + std::to_string(f.size()));
      const std::string& trial = f[0];
      const int region_count = integer(f[1]);
      const double char_width_px = number(f[2]);
      std::vector<gazemill::PlacedFixation> fixations;
      for (std::size_t i = 3; i < f.size(); i += fields_per_fixation) {
        gazemill::PlacedFixation fixation;
        fixation.duration_ms = number(f[i]);
        fixation.x_px = number(f[i + 1]);
        fixation.y_px = number(f[i + 2]);
        fixation.x_deg = number(f[i + 3]);
        fixation.y_deg = number(f[i + 4]);
        fixation.line = integer(f[i + 5]);
        fixation.region = integer(f[i + 6]);
        if (f[i + 7] != "NA") fixation.landing_chars = number(f[i + 7]);
        fixations.push_back(fixation);
      }
      for (const gazemill::RegionMeasures& m : gazemill::reading_measures(fixations, region_count, char_width_px)) {
        out << trial << '\t' << format(m.region) << '\t' << format(m.fixated) << '\t' << format(m.skipped) << '\t'
            << format(m.first_fixation_ms) << '\t' << format(m.single_fixation_ms) << '\t'
            << format(m.gaze_duration_ms) << '\t' << format(m.go_past_ms) << '\t' << format(m.selective_go_past_ms)
            << '\t' << format(m.total_time_ms) << '\t' << format(m.rereading_ms) << '\t'
            << format(m.second_pass_ms) << '\t' << format(m.first_pass_fixations) << '\t'
            << format(m.total_fixations) << '\t' << format(m.regression_out) << '\t' << format(m.regression_in)
            << '\t' << format(m.landing_chars) << '\t' << format(m.incoming_saccade_chars) << '\t'
            << format(m.incoming_saccade_deg) << '\n';
      }
    } catch (const std::exception& error) {
      std::cerr << "line " << line_number << ": " << error.what() << "\n";
      return 2;
    }
  }
  std::cout << out.str();
  return 0;
}
