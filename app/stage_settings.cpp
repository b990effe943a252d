#include "app/stage_settings.h"

#include <cmath>

#include <nlohmann/json.hpp>

#include <filesystem>

#include "alignment/drift_registry.h"
#include "detectors/detector_registry.h"
#include "io/sha256.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

// The [trials] keys of a table route.
std::string trial_table_settings_json(const TrialSegmentationSpec& s) {
  const char* from[] = {"messages", "events", "table"};
  nlohmann::json j = {{"from", from[static_cast<int>(s.source)]},
                      {"trial_type", s.trial_type_pattern},
                      {"trial_column", s.trial_column},
                      // How a column named "trial" is read (ids when unique, else "trial_in_table"):
                      // stores read before it was so are read again.
                      {"trial_column_default", "trial when unique"},
                      {"columns", s.columns},
                      {"span", s.until_next ? "next" : "duration"}};
  if (s.source == TrialSource::table) {
    j["table"] = s.table_template;
    j["delimiter"] = std::string(1, s.table_delimiter);
    j["time_unit"] = to_string(s.table_time_unit);
    j["start_column"] = s.start_column;
    j["end_column"] = s.end_column;
    j["duration_column"] = s.duration_column;
    j["time_origin"] = s.table_times_from_first_sample ? "first_sample" : "clock";
  }
  return j.dump();
}

// The [input.bids] settings.
std::string bids_input_settings_json(const BidsInputSpec& s) {
  return nlohmann::json{{"timestamp_column", s.timestamp_column},
                        {"x_column", s.x_column},
                        {"y_column", s.y_column},
                        {"pupil_column", s.pupil_column},
                        {"pupil_column_named", s.pupil_column_named},
                        {"gaze_in_pixels", s.gaze_in_pixels},
                        {"zero_gaze_is_missing", s.zero_gaze_is_missing},
                        {"tracker_events",
                         {{"column", s.tracker_event_column},
                          {"fixation", s.tracker_fixation_pattern},
                          {"saccade", s.tracker_saccade_pattern},
                          {"blink", s.tracker_blink_pattern}}}}
      .dump();
}


std::string delimiter_text(char c) { return std::string(1, c); }

nlohmann::json eye_json(const std::optional<EyeColumnNames>& e) {
  if (!e) return nullptr;
  return {{"x_column", e->x}, {"y_column", e->y}, {"pupil_column", e->pupil}};
}

std::string resolve(const Protocol& p, const std::string& f) {
  const fs::path base = fs::absolute(fs::path(p.path)).parent_path();
  return fs::path(f).is_absolute() ? f : (base / f).string();
}

}  // namespace

std::string make_key(const std::string& kind, const std::vector<std::string>& parts) {
  Sha256 h;
  h.update(kind);
  for (const auto& p : parts) {
    h.update("\n" + std::to_string(p.size()) + ":");
    h.update(p);
  }
  return h.hex_digest();
}

std::string ingest_settings_json(const Protocol& p) {
  const InputSpec& in = p.input;
  const TableLayout& t = in.table;
  nlohmann::json j;
  j["format"] = in.format == InputFormat::bids ? "bids" : in.format == InputFormat::fixations ? "fixations" : "delimited";
  j["filename_pattern"] = in.filename_pattern;
  j["table"] = {{"delimiter", delimiter_text(t.delimiter)}, {"comment_prefix", t.comment_prefix}, {"time_column", t.time_column},
                {"time_unit", to_string(t.time_unit)},     {"left", eye_json(t.left)},          {"right", eye_json(t.right)},
                {"message_column", t.message_column},     {"missing_values", t.missing_values}, {"zero_gaze_is_missing", t.zero_gaze_is_missing}};
  if (in.message_file) {
    j["messages"] = {{"file", in.message_file->path_template}, {"delimiter", delimiter_text(in.message_file->delimiter)},
                     {"time_column", in.message_file->time_column}, {"text_column", in.message_file->text_column}};
    // Only when set, so that the keys of stores ingested without it stay as they were.
    if (in.message_file->time_unit) j["messages"]["time_unit"] = to_string(*in.message_file->time_unit);
  }
  j["repairs"] = {{"duplicate_timestamps", in.repairs.duplicate_timestamps == DuplicateTimestampPolicy::error ? "error" : "keep_first"},
                  {"unterminated_trials", in.repairs.unterminated_trials == UnterminatedTrialPolicy::error ? "error" : "drop"}};
  if (in.repairs.trials_without_samples != TrialsWithoutSamplesPolicy::error) j["repairs"]["trials_without_samples"] = "drop";
  j["sample_rate_hz"] = in.sample_rate_hz;
  // The off-screen margin is always part of the key: it changed what ingest
  // gives for every store made before it.
  j["offscreen_margin_px"] = std::isfinite(in.offscreen_margin_px) ? nlohmann::json(in.offscreen_margin_px) : nlohmann::json("inf");
  if (!t.status_column.empty()) j["table"]["status"] = {{"column", t.status_column}, {"invalid", t.invalid_status}};
  if (p.screen) {
    j["screen"] = {{"width_px", p.screen->width_px}, {"height_px", p.screen->height_px}, {"width_mm", p.screen->width_mm},
                   {"height_mm", p.screen->height_mm}, {"viewing_distance_mm", p.screen->viewing_distance_mm}};
  }
  j["trials"] = {{"start", p.trials.start_pattern}, {"end", p.trials.end_pattern}, {"variables", p.trials.variable_patterns},
                 {"markers", p.trials.marker_patterns}};
  // Trials from a table and [input.bids] only when used, so that the keys of
  // stores ingested without them stay as they were.
  if (p.trials.source != TrialSource::messages) j["trials"]["table"] = trial_table_settings_json(p.trials);
  if (in.format == InputFormat::fixations) {
    const FixationListSpec& f = in.fixations;
    j["fixations"] = {{"delimiter", delimiter_text(f.delimiter)}, {"time_unit", to_string(f.time_unit)}, {"start_column", f.start_column},
                      {"end_column", f.end_column}, {"duration_column", f.duration_column}, {"x_column", f.x_column},
                      {"y_column", f.y_column}, {"pupil_column", f.pupil_column}, {"eye_column", f.eye_column},
                      {"left_value", f.left_value}, {"right_value", f.right_value}, {"eye", f.eye ? to_string(*f.eye) : std::string()},
                      {"message_column", f.message_column}, {"missing_values", f.missing_values}};
  }
  if (in.format == InputFormat::bids) {
    const std::string bids = bids_input_settings_json(in.bids);
    if (bids != bids_input_settings_json(BidsInputSpec{})) j["bids"] = nlohmann::json::parse(bids);
  }
  return j.dump();
}

std::string detection_settings_json(const DetectionSpec& spec) {
  const auto detector = make_detector(spec);
  nlohmann::json j;
  j["method"] = spec.method;
  j["parameters"] = detector->parameters();
  j["velocity"] = spec.velocity;
  const char* eyes[] = {"left", "right", "best", "average"};
  j["eye"] = eyes[static_cast<int>(spec.eye)];
  j["interpolate_max_ms"] = spec.interpolate_max_ms;
  const char* pso[] = {"separate", "fixation", "saccade"};
  j["pso"] = pso[static_cast<int>(spec.pso)];
  j["blinks"] = {{"min_ms", spec.blink_min_ms}, {"max_ms", spec.blink_max_ms},
                 {"padding_before_ms", spec.blink_padding_before_ms}, {"padding_after_ms", spec.blink_padding_after_ms}};
  j["events"] = {{"min_fixation_ms", spec.min_fixation_ms}, {"min_saccade_ms", spec.min_saccade_ms},
                 {"max_velocity_deg_s", spec.max_velocity_deg_s}, {"max_fixation_gap_ms", spec.max_fixation_gap_ms},
                 {"max_fixation_gap_shift_deg", spec.max_fixation_gap_shift_deg}, {"spike_deg", spec.spike_deg}};
  // Only when asked for, so that the keys of studies without it stay as they were.
  if (spec.pursuit_dispersion_deg > 0) {
    j["pursuit"] = {{"dispersion_deg", spec.pursuit_dispersion_deg}, {"window_ms", spec.pursuit_window_ms}};
  }
  return j.dump();
}

std::string imported_events_settings_json(const Protocol& p) {
  const FixationListSpec& f = p.input.fixations;
  nlohmann::json j;
  j["events"] = "imported, not detected";
  j["from"] = "fixation lists ([input] format = \"fixations\")";
  j["columns"] = {{"start", f.start_column}, {"end", f.end_column},   {"duration", f.duration_column}, {"x", f.x_column},
                  {"y", f.y_column},         {"pupil", f.pupil_column}, {"eye", f.eye_column},         {"message", f.message_column}};
  j["time_unit"] = to_string(f.time_unit);
  j["eye"] = f.eye ? to_string(*f.eye) : std::string("any");
  j["trial_rule"] = "a fixation belongs to the trial in which it starts";
  return j.dump();
}

namespace {
nlohmann::json design_json(const DesignSpec& d) {
  return {{"item", d.item_variable}, {"factors", d.factors}, {"levels", d.levels}};
}
}  // namespace

std::string cleaning_settings_json(const Protocol& p) {
  nlohmann::json rules = nlohmann::json::array();
  for (const auto& r : p.cleaning) rules.push_back({{"name", r.name}, {"kind", r.kind}, {"numbers", r.numbers}, {"texts", r.texts}});
  // The audit counts by design cell: another design is another cleaning result.
  return nlohmann::json{{"rules", rules}, {"design", design_json(p.design)}}.dump();
}

std::string regions_settings_json(const Protocol& p) {
  const RegionSpec& r = p.regions;
  if (!r.present()) return "";
  nlohmann::json j;
  const std::string file = r.boxes_file.empty() ? r.items_file : r.boxes_file;
  j[r.boxes_file.empty() ? "items_file" : "boxes_file"] = file;
  std::error_code ec;
  const std::string path = resolve(p, file);
  j["file_sha256"] = fs::exists(path, ec) ? sha256_file(path) : "";
  const TextLayoutSpec& l = r.layout;
  nlohmann::json advances = nlohmann::json::object();
  for (const auto& [c, a] : l.advance_px) advances[std::string(1, c)] = a;
  j["layout"] = {{"char_width_px", l.char_width_px}, {"line_height_px", l.line_height_px}, {"left_margin_px", l.left_margin_px},
                 {"first_line_top_px", l.first_line_top_px}, {"wrap_width_chars", l.wrap_width_chars}, {"advances", advances}};
  j["off_line"] = r.off_line_nearest ? "nearest" : "exclude";
  j["max_line_distance_px"] = r.max_line_distance_px;
  j["margin"] = r.margin_nearest ? "nearest" : "exclude";
  j["margin_px"] = r.margin_px;
  return j.dump();
}

std::string align_settings_json(const Protocol& p) {
  const AlignmentSpec& a = p.alignment;
  const auto corrector = a.members.empty() ? make_drift_corrector(a.method, a.parameters) : make_majority_corrector(a.members, a.parameters);
  nlohmann::json j;
  j["method"] = a.method;
  j["parameters"] = corrector->parameters();
  if (a.method == "majority") j["members"] = a.members.empty() ? default_majority_members() : a.members;
  j["min_confidence"] = a.min_confidence;
  j["font_height_px"] = a.font_height_px;
  if (!a.review_file.empty()) {
    const fs::path base = fs::absolute(fs::path(p.path)).parent_path();
    const std::string path = fs::path(a.review_file).is_absolute() ? a.review_file : (base / a.review_file).string();
    std::error_code ec;
    j["review_file"] = a.review_file;
    j["review_file_sha256"] = fs::exists(path, ec) ? sha256_file(path) : "";
  }
  return j.dump();
}

std::string measure_settings_json(const Protocol& p) {
  // The item names each trial's regions; the factors make the aggregates' cells.
  return nlohmann::json{{"design", design_json(p.design)}}.dump();
}

}  // namespace gazemill
