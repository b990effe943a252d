#include "pipeline/measure_table.h"

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

std::optional<double> measure_value(const MeasureRow& r, const std::string& n) {
  auto opt = [](const std::optional<double>& v) { return v; };
  if (n == "first_fixation_ms") return opt(r.first_fixation_ms);
  if (n == "single_fixation_ms") return opt(r.single_fixation_ms);
  if (n == "gaze_duration_ms") return opt(r.gaze_duration_ms);
  if (n == "go_past_ms") return opt(r.go_past_ms);
  if (n == "selective_go_past_ms") return opt(r.selective_go_past_ms);
  if (n == "total_time_ms") return opt(r.total_time_ms);
  if (n == "rereading_ms") return opt(r.rereading_ms);
  if (n == "second_pass_ms") return opt(r.second_pass_ms);
  if (n == "skipped_first_pass") return r.skipped ? 1.0 : 0.0;
  if (n == "fixated") return r.fixated ? 1.0 : 0.0;
  if (n == "first_pass_fixations") return static_cast<double>(r.first_pass_fixations);
  if (n == "total_fixations") return static_cast<double>(r.total_fixations);
  if (n == "regression_out") return r.regression_out ? std::optional<double>(*r.regression_out ? 1.0 : 0.0) : std::nullopt;
  if (n == "regression_in") return r.regression_in ? std::optional<double>(*r.regression_in ? 1.0 : 0.0) : std::nullopt;
  if (n == "landing_chars") return opt(r.landing_chars);
  if (n == "incoming_saccade_chars") return opt(r.incoming_saccade_chars);
  if (n == "incoming_saccade_deg") return opt(r.incoming_saccade_deg);
  return std::nullopt;
}

}  // namespace gazemill
