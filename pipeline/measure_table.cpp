#include "pipeline/measure_table.h"

#include <algorithm>

namespace gazemill {

const std::vector<std::string>& measure_names() {
  static const std::vector<std::string> names = {
      "first_fixation_ms", "single_fixation_ms", "gaze_duration_ms", "go_past_ms",      "selective_go_past_ms",
      "total_time_ms",     "rereading_ms",       "second_pass_ms",   "skipped_first_pass", "fixated",
      "first_pass_fixations", "total_fixations", "regression_out",   "regression_in",   "landing_chars",
      "incoming_saccade_chars", "incoming_saccade_deg"};
  return names;
}

const std::vector<std::string>& duration_measure_names() {
  static const std::vector<std::string> names = {"first_fixation_ms", "single_fixation_ms", "gaze_duration_ms", "go_past_ms",
                                                 "selective_go_past_ms", "total_time_ms", "rereading_ms", "second_pass_ms"};
  return names;
}

std::optional<double> measure_value(const MeasureRow& r, std::size_t index) {
  const auto flag = [](bool b) { return std::optional<double>(b ? 1.0 : 0.0); };
  const auto maybe_flag = [](const std::optional<bool>& b) { return b ? std::optional<double>(*b ? 1.0 : 0.0) : std::nullopt; };
  switch (index) {  // the order of measure_names()
    case 0: return r.first_fixation_ms;
    case 1: return r.single_fixation_ms;
    case 2: return r.gaze_duration_ms;
    case 3: return r.go_past_ms;
    case 4: return r.selective_go_past_ms;
    case 5: return r.total_time_ms;
    case 6: return r.rereading_ms;
    case 7: return r.second_pass_ms;
    case 8: return flag(r.skipped);
    case 9: return flag(r.fixated);
    case 10: return static_cast<double>(r.first_pass_fixations);
    case 11: return static_cast<double>(r.total_fixations);
    case 12: return maybe_flag(r.regression_out);
    case 13: return maybe_flag(r.regression_in);
    case 14: return r.landing_chars;
    case 15: return r.incoming_saccade_chars;
    case 16: return r.incoming_saccade_deg;
    default: return std::nullopt;
  }
}

std::optional<double> measure_value(const MeasureRow& r, const std::string& n) {
  const auto& names = measure_names();
  const auto it = std::find(names.begin(), names.end(), n);
  return it == names.end() ? std::nullopt : measure_value(r, static_cast<std::size_t>(it - names.begin()));
}

}  // namespace gazemill
