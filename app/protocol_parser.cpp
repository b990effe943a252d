#include "app/protocol_parser.h"

#include <algorithm>
#include <cmath>
#include <fstream>
#include <set>
#include <sstream>

#include "app/toml_section.h"
#include "alignment/drift_registry.h"
#include "detectors/detector_registry.h"
#include "filters/cleaning_rule.h"
#include "pipeline/edit_distance.h"
#include "pipeline/input_error.h"
#include "pipeline/named_regex.h"

namespace gazemill {
namespace {

char parse_delimiter(TomlSection& s, const std::string& key, char fallback) {
  const auto v = s.string(key);
  if (!v) return fallback;
  if (auto d = delimiter_named(*v)) return *d;
  s.fail(key, "expected one character or tab, comma, semicolon, space; found \"" + *v + "\"");
}

void check_regex(TomlSection& s, const std::string& key, const std::string& pattern) {
  try {
    NamedRegex re(pattern);
  } catch (const std::invalid_argument& e) {
    s.fail(key, e.what());
  }
}

// The file name gives the participant and the session; any other name it
// captures is for a file's path ({name} in input.messages.file or
// trials.table). A name nothing reads is a misspelling; a session without
// the participant leaves the participant to be the whole file name, session
// and all: every file a participant of its own, the participant rules
// judging sessions one by one.
void check_filename_captures(const Protocol& p) {
  if (!p.input.filename_pattern_line) return;  // BIDS's own pattern
  const NamedRegex re(p.input.filename_pattern);
  std::vector<std::string> read = {"participant", "session"};
  auto names_in = [&read](const std::string& t) {
    for (std::size_t open = t.find('{'); open != std::string::npos; open = t.find('{', open + 1)) {
      const auto close = t.find('}', open);
      if (close != std::string::npos) read.push_back(t.substr(open + 1, close - open - 1));
    }
  };
  if (p.input.message_file) names_in(p.input.message_file->path_template);
  names_in(p.trials.table_template);
  const InputLocation where{p.path, p.input.filename_pattern_line, "input.filename_pattern"};
  for (const auto& name : re.names()) {
    if (std::find(read.begin(), read.end(), name) != read.end()) continue;
    const std::string meant = likely_meant(name, read);
    throw InputError(where, "captures '" + name + "', which nothing reads: the file name gives participant and session, and the {names} "
                            "of input.messages.file and trials.table" + (meant.empty() ? std::string() : "; did you mean " + meant + "?"));
  }
  const auto& names = re.names();
  if (std::find(names.begin(), names.end(), "session") != names.end() && std::find(names.begin(), names.end(), "participant") == names.end()) {
    throw InputError(where, "captures a session but no participant: name the group that holds it (?<participant>...), or every file would be a participant of its own");
  }
}

constexpr std::int64_t kMostScreenPx = 100000;

double positive(TomlSection& s, const std::string& key) {
  const double v = s.required_number(key);
  // TOML has inf and nan; neither is a size.
  if (!(v > 0) || !std::isfinite(v)) s.fail(key, "expected a positive number, found " + std::to_string(v));
  return v;
}

std::optional<EyeColumnNames> parse_eye(TomlSection& table, const std::string& key) {
  auto eye = table.table(key);
  if (!eye) return std::nullopt;
  EyeColumnNames cols;
  cols.x = eye->required_string("x_column");
  cols.y = eye->required_string("y_column");
  cols.pupil = eye->string("pupil_column").value_or("");
  eye->finish();
  return cols;
}

// [input.bids]: a dataset's own column names, and the tracker's own events to keep.
void parse_bids_input(TomlSection& b, BidsInputSpec& spec) {
  if (auto v = b.string("timestamp_column")) spec.timestamp_column = *v;
  if (auto v = b.string("x_column")) spec.x_column = *v;
  if (auto v = b.string("y_column")) spec.y_column = *v;
  if (auto v = b.string("pupil_column")) {
    spec.pupil_column = *v;
    spec.pupil_column_named = true;
  }
  spec.gaze_in_pixels = b.boolean("gaze_in_pixels").value_or(false);
  spec.zero_gaze_is_missing = b.boolean("zero_gaze_is_missing").value_or(false);
  if (auto t = b.table("tracker_events")) {
    spec.tracker_event_column = t->string("column").value_or("trial_type");
    for (auto [key, field] : {std::pair{"fixation", &spec.tracker_fixation_pattern}, std::pair{"saccade", &spec.tracker_saccade_pattern},
                              std::pair{"blink", &spec.tracker_blink_pattern}}) {
      if (auto v = t->string(key)) {
        check_regex(*t, key, *v);
        *field = *v;
      }
    }
    if (!spec.keeps_tracker_events()) t->fail("column", "name at least one of fixation, saccade, blink (a pattern on the column)");
    t->finish();
  }
  b.finish();
}

// [input.fixations]: the column mapping of a fixation list.
void parse_fixation_list(TomlSection& f, FixationListSpec& spec) {
  spec.delimiter = parse_delimiter(f, "delimiter", '\t');
  const std::string unit = f.string("time_unit").value_or("ms");
  const auto tu = parse_time_unit(unit);
  if (!tu) f.fail("time_unit", "expected \"s\", \"ms\", \"us\" or \"ns\", found \"" + unit + "\"");
  spec.time_unit = *tu;
  spec.start_column = f.required_string("start_column");
  spec.end_column = f.string("end_column").value_or("");
  spec.duration_column = f.string("duration_column").value_or("");
  if (spec.end_column.empty() == spec.duration_column.empty()) {
    f.fail(spec.end_column.empty() ? "end_column" : "duration_column",
           "give exactly one of end_column (each fixation's end) and duration_column (its duration), in time_unit");
  }
  spec.x_column = f.required_string("x_column");
  spec.y_column = f.required_string("y_column");
  spec.pupil_column = f.string("pupil_column").value_or("");
  spec.eye_column = f.string("eye_column").value_or("");
  spec.left_value = f.string("left_value").value_or("left");
  spec.right_value = f.string("right_value").value_or("right");
  if (spec.left_value.empty() || spec.left_value == spec.right_value) {
    f.fail("left_value", "the eye column's texts for the two eyes must differ and not be empty");
  }
  if (auto e = f.string("eye")) {
    if (*e == "left") spec.eye = Eye::left;
    else if (*e == "right") spec.eye = Eye::right;
    else f.fail("eye", "expected \"left\" or \"right\", found \"" + *e + "\"");
  } else if (spec.eye_column.empty()) {
    f.fail("eye", "the list has no eye_column, so say which eye its fixations are from: eye = \"left\" or \"right\"");
  }
  spec.message_column = f.string("message_column").value_or("");
  if (auto mv = f.strings("missing_values")) spec.missing_values = *mv;
  f.finish();
}

void parse_input(TomlSection& in, Protocol& p) {
  InputSpec& spec = p.input;
  const std::string format = in.string("format").value_or("delimited");
  if (format == "delimited") spec.format = InputFormat::delimited;
  else if (format == "bids") spec.format = InputFormat::bids;
  else if (format == "fixations") spec.format = InputFormat::fixations;
  else in.fail("format", "expected \"delimited\" (samples), \"bids\" (a BIDS eye-tracking dataset) or \"fixations\" (a fixation list), found \"" +
                             format + "\"");

  auto files = in.strings("files");
  if (!files || files->empty()) {
    throw InputError({p.path, in.line_of("files"), in.name_of("files")}, "required: a list of file patterns, e.g. [\"raw/*.tsv\"]");
  }
  spec.files = *files;
  if (auto pat = in.string("filename_pattern")) {
    check_regex(in, "filename_pattern", *pat);
    spec.filename_pattern = *pat;
    spec.filename_pattern_line = in.line_of("filename_pattern");
  } else if (spec.format == InputFormat::bids) {
    spec.filename_pattern = "sub-(?<participant>[A-Za-z0-9]+)(?:_ses-(?<session>[A-Za-z0-9]+))?";
  }
  if (auto rate = in.number("sample_rate_hz")) {
    if (!(*rate > 0)) in.fail("sample_rate_hz", "expected a positive rate in Hz");
    spec.sample_rate_hz = *rate;
    spec.sample_rate_line = in.line_of("sample_rate_hz");
  }

  if (auto margin = in.number("offscreen_margin_px")) {
    if (!(*margin >= 0)) in.fail("offscreen_margin_px", "expected a distance in px of 0 or more (inf: no check)");
    spec.offscreen_margin_px = *margin;
  }

  if (spec.format == InputFormat::fixations) {
    if (in.has("table")) in.fail("table", "is for sample exports; a fixation list is mapped in [input.fixations]");
    if (in.has("sample_rate_hz")) in.fail("sample_rate_hz", "a fixation list has no samples");
    auto f = in.table("fixations");
    if (!f) throw InputError({p.path, in.line(), "input.fixations"}, "required for format = \"fixations\": the column mapping [input.fixations]");
    parse_fixation_list(*f, spec.fixations);
  } else if (in.has("fixations")) {
    in.fail("fixations", "is for format = \"fixations\"");
  }

  if (auto t = in.table("table")) {
    TableLayout& L = spec.table;
    L.delimiter = parse_delimiter(*t, "delimiter", '\t');
    L.comment_prefix = t->string("comment_prefix").value_or("");
    L.time_column = t->required_string("time_column");
    const std::string unit = t->string("time_unit").value_or("ms");
    const auto tu = parse_time_unit(unit);
    if (!tu) t->fail("time_unit", "expected \"s\", \"ms\", \"us\" or \"ns\", found \"" + unit + "\"");
    L.time_unit = *tu;
    L.message_column = t->string("message_column").value_or("");
    if (auto mv = t->strings("missing_values")) L.missing_values = *mv;
    L.zero_gaze_is_missing = t->boolean("zero_gaze_is_missing").value_or(false);
    if (auto sc = t->string("status_column")) {
      if (sc->empty()) t->fail("status_column", "expected the name of a column");
      L.status_column = *sc;
      auto invalid = t->strings("invalid_status");
      if (!invalid || invalid->empty()) {
        t->fail("status_column", "name the status values that mark a sample invalid: invalid_status = [\"...\"]");
      }
      L.invalid_status = *invalid;
    } else if (t->has("invalid_status")) {
      t->fail("invalid_status", "needs status_column, the column these values are found in");
    }
    L.left = parse_eye(*t, "left");
    L.right = parse_eye(*t, "right");
    if (!L.left && !L.right) {
      throw InputError({p.path, in.line_of("table"), in.name_of("table")},
                       "at least one eye is needed: add [input.table.left] or [input.table.right] with x_column and y_column");
    }
    t->finish();
  } else if (spec.format == InputFormat::delimited) {
    throw InputError({p.path, 0, "input.table"}, "required for delimited input: the column mapping [input.table]");
  }

  if (auto m = in.table("messages")) {
    MessageFileSpec ms;
    ms.path_template = m->required_string("file");
    ms.delimiter = parse_delimiter(*m, "delimiter", '\t');
    ms.time_column = m->required_string("time_column");
    ms.text_column = m->required_string("text_column");
    if (auto unit = m->string("time_unit")) {
      const auto tu = parse_time_unit(*unit);
      if (!tu) m->fail("time_unit", "expected \"s\", \"ms\", \"us\" or \"ns\", found \"" + *unit + "\"");
      ms.time_unit = *tu;
    }
    m->finish();
    if (!spec.table.message_column.empty() || !spec.fixations.message_column.empty()) {
      m->fail("file", std::string("messages come either from input.") + (spec.format == InputFormat::fixations ? "fixations" : "table") +
                          ".message_column or from a separate file, not both");
    }
    spec.message_file = ms;
  }

  if (auto b = in.table("bids")) {
    if (spec.format != InputFormat::bids) b->fail("timestamp_column", "[input.bids] is for format = \"bids\"");
    parse_bids_input(*b, spec.bids);
  }

  if (auto r = in.table("repairs")) {
    if (auto d = r->string("duplicate_timestamps")) {
      if (*d == "error") spec.repairs.duplicate_timestamps = DuplicateTimestampPolicy::error;
      else if (*d == "keep_first") spec.repairs.duplicate_timestamps = DuplicateTimestampPolicy::keep_first;
      else r->fail("duplicate_timestamps", "expected \"error\" or \"keep_first\", found \"" + *d + "\"");
    }
    if (auto u = r->string("unterminated_trials")) {
      if (*u == "error") spec.repairs.unterminated_trials = UnterminatedTrialPolicy::error;
      else if (*u == "drop") spec.repairs.unterminated_trials = UnterminatedTrialPolicy::drop;
      else r->fail("unterminated_trials", "expected \"error\" or \"drop\", found \"" + *u + "\"");
    }
    if (auto u = r->string("trials_without_samples")) {
      if (*u == "error") spec.repairs.trials_without_samples = TrialsWithoutSamplesPolicy::error;
      else if (*u == "drop") spec.repairs.trials_without_samples = TrialsWithoutSamplesPolicy::drop;
      else r->fail("trials_without_samples", "expected \"error\" or \"drop\", found \"" + *u + "\"");
    }
    r->finish();
  }
  in.finish();
}

void parse_screen(TomlSection& s, Protocol& p) {
  ScreenGeometry g;
  const auto w = s.required_integer("width_px");
  const auto h = s.required_integer("height_px");
  // Bounded so that the cast to int keeps the value.
  if (w <= 0 || w > kMostScreenPx) s.fail("width_px", "expected a positive number of pixels, at most " + std::to_string(kMostScreenPx));
  if (h <= 0 || h > kMostScreenPx) s.fail("height_px", "expected a positive number of pixels, at most " + std::to_string(kMostScreenPx));
  g.width_px = static_cast<int>(w);
  g.height_px = static_cast<int>(h);
  g.width_mm = positive(s, "width_mm");
  g.height_mm = positive(s, "height_mm");
  g.viewing_distance_mm = positive(s, "viewing_distance_mm");
  s.finish();
  p.screen = g;
}

// [trials] from = "events" or "table": each row of a table is a trial.
void parse_trial_table(TomlSection& t, Protocol& p) {
  TrialSegmentationSpec& spec = p.trials;
  const bool events = spec.source == TrialSource::events;
  for (const char* key : {"start", "end", "variables"}) {
    if (t.has(key)) {
      t.fail(key, std::string("is for trials from messages; with from = \"") + (events ? "events" : "table") +
                      "\" each row is a trial and its columns are the variables (markers still come from messages)");
    }
  }
  if (events && p.input.format != InputFormat::bids) {
    t.fail("from", "from = \"events\" reads the BIDS task *_events.tsv, so [input] format must be \"bids\" "
                   "(for a lab's own trial table use from = \"table\")");
  }
  if (auto v = t.string("trial_type")) {
    if (!events) t.fail("trial_type", "selects rows of the BIDS task events (from = \"events\")");
    check_regex(t, "trial_type", *v);
    spec.trial_type_pattern = *v;
  }
  spec.trial_column = t.string("trial_column").value_or("");
  if (auto cols = t.strings("columns")) {
    std::set<std::string> seen;
    for (const auto& c : *cols) {
      if (c.empty() || !seen.insert(c).second) t.fail("columns", "expected distinct, non-empty column names");
    }
    spec.columns = *cols;
  }
  if (auto span = t.string("span")) {
    if (*span != "duration" && *span != "next") {
      t.fail("span", "expected \"duration\" (each row from its start for its duration) or \"next\" (until the next row's start)");
    }
    spec.until_next = *span == "next";
  }
  if (events) {
    for (const char* key : {"table", "delimiter", "time_unit", "start_column", "end_column", "duration_column", "time_origin"}) {
      if (t.has(key)) {
        t.fail(key, "is for from = \"table\"; BIDS task events have onset and duration in seconds, their origin given by the sidecars");
      }
    }
    return;
  }
  spec.table_template = t.required_string("table");
  spec.table_delimiter = parse_delimiter(t, "delimiter", '\t');
  if (auto unit = t.string("time_unit")) {
    const auto tu = parse_time_unit(*unit);
    if (!tu) t.fail("time_unit", "expected \"s\", \"ms\", \"us\" or \"ns\", found \"" + *unit + "\"");
    spec.table_time_unit = *tu;
  }
  spec.start_column = t.string("start_column").value_or("start");
  spec.end_column = t.string("end_column").value_or("end");
  spec.duration_column = t.string("duration_column").value_or("duration");
  if (auto origin = t.string("time_origin")) {
    if (*origin != "clock" && *origin != "first_sample") {
      t.fail("time_origin", "expected \"clock\" (times on the recording's clock) or \"first_sample\" (from its first sample)");
    }
    spec.table_times_from_first_sample = *origin == "first_sample";
  }
}

void parse_trials(TomlSection& t, Protocol& p) {
  TrialSegmentationSpec& spec = p.trials;
  const std::string from = t.string("from").value_or("messages");
  if (from == "messages") spec.source = TrialSource::messages;
  else if (from == "events") spec.source = TrialSource::events;
  else if (from == "table") spec.source = TrialSource::table;
  else t.fail("from", "expected \"messages\", \"events\" (the BIDS task *_events.tsv) or \"table\", found \"" + from + "\"");
  static const char* const kTableKeys[] = {"trial_type", "trial_column", "columns", "span", "table", "delimiter", "time_unit",
                                           "start_column", "end_column", "duration_column", "time_origin"};
  if (spec.source == TrialSource::messages) {
    for (const char* key : kTableKeys) {
      if (t.has(key)) t.fail(key, "is for trials from = \"events\" or \"table\"; these trials come from messages (start, end)");
    }
    spec.start_pattern = t.required_string("start");
    check_regex(t, "start", spec.start_pattern);
    spec.end_pattern = t.required_string("end");
    check_regex(t, "end", spec.end_pattern);
    if (auto vars = t.strings("variables")) {
      for (const auto& v : *vars) {
        check_regex(t, "variables", v);
        if (NamedRegex(v).names().empty()) t.fail("variables", "pattern \"" + v + "\" has no named capture (?<name>...) to set a variable");
      }
      spec.variable_patterns = *vars;
      spec.variables_line = t.line_of("variables");
    }
  } else {
    parse_trial_table(t, p);
  }
  if (auto m = t.table("markers")) {
    for (const auto& name : m->keys()) {
      const auto pattern = m->string(name);
      check_regex(*m, name, *pattern);
      spec.marker_patterns[name] = *pattern;
      spec.marker_lines[name] = m->line_of(name);
    }
  }
  t.finish();
}

// Every name the trial patterns capture, except the trial id; for trials
// from a table, the columns it declares, or nullopt when it declares none
// (its columns are known only at ingest, which checks them: app/table_trials.h).
std::optional<std::set<std::string>> trial_variable_names(const TrialSegmentationSpec& t) {
  if (t.source != TrialSource::messages) {
    if (t.columns.empty()) return std::nullopt;
    return std::set<std::string>(t.columns.begin(), t.columns.end());
  }
  std::set<std::string> names;
  std::vector<std::string> patterns = t.variable_patterns;
  patterns.push_back(t.start_pattern);
  patterns.push_back(t.end_pattern);
  for (const auto& pattern : patterns) {
    const NamedRegex re(pattern);  // a local: names() refers into it
    for (const auto& n : re.names()) {
      if (n != "trial") names.insert(n);
    }
  }
  return names;
}

// Where the names of trial_variable_names come from, for errors.
std::string variables_source(const TrialSegmentationSpec& t) {
  return t.source == TrialSource::messages ? "the [trials] patterns capture" : "[trials] columns lists";
}

std::string listing(const std::set<std::string>& names) {
  if (names.empty()) return "none";
  std::string out;
  for (const auto& n : names) out += (out.empty() ? "" : ", ") + n;
  return out;
}

void parse_design(std::optional<TomlSection> d, Protocol& p) {
  if (!d) return;
  const auto names = trial_variable_names(p.trials);
  auto known = [&](const std::string& key, const std::string& name) {
    if (names && !names->count(name)) {
      d->fail(key, "'" + name + "' is not a trial variable; " + variables_source(p.trials) + " " + listing(*names) +
                       (p.trials.source == TrialSource::messages ? " (name a capture (?<" + name + ">...) in a pattern, or use one of those)"
                                                                 : " (add it there, or use one of those)"));
    }
  };
  if (auto item = d->string("item")) {
    known("item", *item);
    p.design.item_variable = *item;
  }
  if (auto factors = d->strings("factors")) {
    std::set<std::string> seen;
    for (const auto& f : *factors) {
      known("factors", f);
      if (!seen.insert(f).second) d->fail("factors", "'" + f + "' is listed twice");
      if (f == p.design.item_variable) d->fail("factors", "'" + f + "' is the item variable; items are not a factor of the design");
    }
    p.design.factors = *factors;
  }
  if (auto levels = d->table("levels")) {
    for (const auto& factor : levels->keys()) {
      if (std::find(p.design.factors.begin(), p.design.factors.end(), factor) == p.design.factors.end()) {
        levels->fail(factor, "'" + factor + "' is not one of the design's factors (" + listing({p.design.factors.begin(), p.design.factors.end()}) + ")");
      }
      const auto list = levels->strings(factor);
      if (!list || list->empty()) levels->fail(factor, "expected the factor's levels as a list of strings, e.g. [\"frequent\", \"rare\"]");
      std::set<std::string> seen;
      for (const auto& level : *list) {
        if (!seen.insert(level).second) levels->fail(factor, "the level '" + level + "' is listed twice");
      }
      p.design.levels[factor] = *list;
      p.design.levels_lines[factor] = levels->line_of(factor);
    }
    levels->finish();
  }
  d->finish();
}

void parse_detection(TomlSection& d, Protocol& p) {
  DetectionSpec& spec = p.detection;
  if (auto m = d.string("method")) spec.method = *m;
  if (auto v = d.string("velocity")) spec.velocity = *v;
  if (auto e = d.string("eye")) {
    if (*e == "left") spec.eye = EyeChoice::left;
    else if (*e == "right") spec.eye = EyeChoice::right;
    else if (*e == "best") spec.eye = EyeChoice::best;
    else if (*e == "average") spec.eye = EyeChoice::average;
    else d.fail("eye", "expected \"left\", \"right\", \"best\" or \"average\", found \"" + *e + "\"");
  }
  if (auto pso = d.string("pso")) {
    if (*pso == "separate") spec.pso = PsoHandling::separate;
    else if (*pso == "fixation") spec.pso = PsoHandling::fixation;
    else if (*pso == "saccade") spec.pso = PsoHandling::saccade;
    else d.fail("pso", "expected \"separate\", \"fixation\" or \"saccade\", found \"" + *pso + "\"");
  }
  // Durations (ms), speeds (deg/s) and distances (deg): finite (TOML has
  // inf) and bounded, so that a duration's microseconds fit any integer.
  auto non_negative = [&](TomlSection& s, const std::string& key, double& field) {
    if (auto v = s.number(key)) {
      if (!(*v >= 0 && *v <= 60000)) s.fail(key, "expected a number from 0 to 60000, found " + std::to_string(*v));
      field = *v;
    }
  };
  non_negative(d, "interpolate_max_ms", spec.interpolate_max_ms);
  if (auto params = d.table("parameters")) {
    for (const auto& key : params->keys()) {
      const auto v = params->number(key);
      spec.parameters[key] = *v;
    }
  }
  if (auto b = d.table("blinks")) {
    non_negative(*b, "min_ms", spec.blink_min_ms);
    non_negative(*b, "max_ms", spec.blink_max_ms);
    non_negative(*b, "padding_before_ms", spec.blink_padding_before_ms);
    non_negative(*b, "padding_after_ms", spec.blink_padding_after_ms);
    b->finish();
    if (spec.blink_max_ms < spec.blink_min_ms) b->fail("max_ms", "must not be below detection.blinks.min_ms");
  }
  if (auto s = d.table("pursuit")) {
    non_negative(*s, "dispersion_deg", spec.pursuit_dispersion_deg);
    non_negative(*s, "window_ms", spec.pursuit_window_ms);
    s->finish();
    if (spec.pursuit_dispersion_deg > 0 && !(spec.pursuit_window_ms > 0)) s->fail("window_ms", "must be above 0 when dispersion_deg is");
  }
  if (auto e = d.table("events")) {
    non_negative(*e, "min_fixation_ms", spec.min_fixation_ms);
    non_negative(*e, "min_saccade_ms", spec.min_saccade_ms);
    non_negative(*e, "max_velocity_deg_s", spec.max_velocity_deg_s);
    non_negative(*e, "max_fixation_gap_ms", spec.max_fixation_gap_ms);
    non_negative(*e, "max_fixation_gap_shift_deg", spec.max_fixation_gap_shift_deg);
    non_negative(*e, "spike_deg", spec.spike_deg);
    e->finish();
  }
  d.finish();
  // Method, velocity and parameter names are checked by the detector registry.
  try {
    make_detector(spec);
  } catch (const std::invalid_argument& e) {
    const std::string key = d.has("parameters") ? "parameters" : "method";
    d.fail(key, e.what());
  }
}

void parse_regions(TomlSection& r, Protocol& p) {
  RegionSpec& spec = p.regions;
  spec.boxes_file = r.string("boxes_file").value_or("");
  spec.items_file = r.string("items_file").value_or("");
  if (spec.boxes_file.empty() == spec.items_file.empty()) {
    throw InputError({p.path, r.line(), "regions"}, "give either boxes_file or items_file (item text laid out with the font metrics)");
  }
  TextLayoutSpec& L = spec.layout;
  auto positive_or = [&](const std::string& key, double fallback) {
    auto v = r.number(key);
    if (!v) return fallback;
    if (!(*v > 0) || !std::isfinite(*v)) r.fail(key, "expected a positive number");
    return *v;
  };
  L.char_width_px = positive_or("char_width_px", 0);
  L.line_height_px = positive_or("line_height_px", L.line_height_px);
  if (auto v = r.number("left_margin_px")) L.left_margin_px = *v;
  if (auto v = r.number("first_line_top_px")) L.first_line_top_px = *v;
  if (auto v = r.integer("wrap_width_chars")) {
    if (*v < 1 || *v > 100000) r.fail("wrap_width_chars", "expected a positive number of characters, at most 100000");
    L.wrap_width_chars = static_cast<int>(*v);
  }
  if (auto adv = r.table("advances")) {
    for (const auto& key : adv->keys()) {
      if (key.size() != 1) adv->fail(key, "advances are given per character: one character per key, e.g. \"i\" = 5.5");
      const auto v = adv->number(key);
      if (!(*v > 0) || !std::isfinite(*v)) adv->fail(key, "expected a positive advance in px");
      L.advance_px[key[0]] = *v;
    }
  }
  // Keys that place text laid out from an items file: beside a boxes file
  // they would change nothing, though whoever wrote them expects they do.
  if (!spec.boxes_file.empty()) {
    std::vector<std::string> present;  // all of them in one message, not one per run
    for (const char* key : {"left_margin_px", "first_line_top_px", "wrap_width_chars", "advances"}) {
      if (r.has(key)) present.emplace_back(key);
    }
    if (!present.empty()) {
      std::string others;
      for (std::size_t i = 1; i < present.size(); ++i) others += (others.empty() ? "" : ", ") + present[i];
      r.fail(present.front(), "lays out the text of an items_file; with boxes_file each region's box gives its place, so this key would change "
                              "nothing. Remove it" + (others.empty() ? std::string() : " (and " + others + ", likewise)"));
    }
  }
  if (!spec.items_file.empty() && L.char_width_px <= 0) {
    throw InputError({p.path, r.line(), "regions.char_width_px"}, "items_file needs the font's character width (char_width_px)");
  }
  if (auto o = r.string("off_line")) {
    if (*o != "nearest" && *o != "exclude") r.fail("off_line", "expected \"nearest\" or \"exclude\"");
    spec.off_line_nearest = *o == "nearest";
  }
  if (auto m = r.string("margin")) {
    if (*m != "nearest" && *m != "exclude") r.fail("margin", "expected \"nearest\" or \"exclude\"");
    spec.margin_nearest = *m == "nearest";
  }
  if (auto v = r.number("max_line_distance_px")) spec.max_line_distance_px = *v;
  if (auto v = r.number("margin_px")) spec.margin_px = *v;
  r.finish();
}

void parse_alignment(TomlSection& a, Protocol& p) {
  AlignmentSpec& spec = p.alignment;
  if (auto m = a.string("method")) spec.method = *m;
  if (auto m = a.strings("members")) {
    if (spec.method != "majority") a.fail("members", "members are for method = \"majority\"");
    spec.members = *m;
  }
  if (auto v = a.number("min_confidence")) {
    if (!(*v >= 0 && *v <= 1)) a.fail("min_confidence", "expected a number from 0 to 1");
    spec.min_confidence = *v;
  }
  if (auto v = a.number("font_height_px")) {
    if (!(*v > 0) || !std::isfinite(*v)) a.fail("font_height_px", "expected a positive number of pixels");
    spec.font_height_px = *v;
  }
  if (auto v = a.string("review_file")) spec.review_file = *v;
  if (auto params = a.table("parameters")) {
    for (const auto& key : params->keys()) {
      const auto v = params->number(key);
      if (!v) params->fail(key, "expected a number");
      spec.parameters[key] = *v;
    }
  }
  try {
    if (spec.members.empty()) make_drift_corrector(spec.method, spec.parameters);
    else make_majority_corrector(spec.members, spec.parameters);
  } catch (const std::invalid_argument& e) {
    a.fail(a.has("parameters") ? "parameters" : "method", e.what());
  }
  a.finish();
}

void parse_cleaning(std::vector<TomlSection>& blocks, Protocol& p) {
  std::set<std::string> names;
  for (auto& b : blocks) {
    CleaningRuleSpec spec;
    spec.line = b.line();
    spec.name = b.required_string("name");
    spec.kind = b.required_string("kind");
    if (!names.insert(spec.name).second) b.fail("name", "two cleaning rules are named \"" + spec.name + "\"; names must be unique");
    for (const auto& [k, v] : b.raw()) {
      const std::string key(k.str());
      if (key == "name" || key == "kind") continue;
      spec.key_lines[key] = b.line_of(key);
      if (v.is_number()) spec.numbers[key] = *v.value<double>();
      else if (v.is_string()) spec.texts[key] = *v.value<std::string>();
      else b.fail(key, "rule '" + spec.name + "': a parameter is a number or a text");
    }
    b.keys();  // the rule checks its own parameters below
    // A fixation list brings no samples, blinks or stretches of lost tracking:
    // these rules would remove every trial, or nothing, without a word.
    if (p.input.format == InputFormat::fixations &&
        (spec.kind == "exclude_trials_with_data_loss" || spec.kind == "delete_fixations_near_blinks" ||
         spec.kind == "exclude_trials_with_gap_in_window" || spec.kind == "exclude_trials_with_gap_in_first_pass")) {
      b.fail("kind", "rule '" + spec.name + "' (" + spec.kind + ") needs samples, blinks or lost tracking, which a fixation list "
                     "([input] format = \"fixations\") does not have");
    }
    // Names that refer to other parts of the protocol are checked here, before any work.
    if (const auto m = spec.texts.find("marker"); m != spec.texts.end() && m->second != "trial_start" &&
                                                  !p.trials.marker_patterns.count(m->second)) {
      std::set<std::string> markers = {"trial_start"};
      for (const auto& [name, pattern] : p.trials.marker_patterns) markers.insert(name);
      b.fail("marker", "rule '" + spec.name + "': no marker '" + m->second + "'; the markers are " + listing(markers) +
                           " (named in [trials.markers])");
    }
    if (const auto v = spec.texts.find("variable"); v != spec.texts.end()) {
      const auto names = trial_variable_names(p.trials);
      if (names && !names->count(v->second)) {
        b.fail("variable", "rule '" + spec.name + "': '" + v->second + "' is not a trial variable; " + variables_source(p.trials) + " " +
                               listing(*names));
      }
    }
    try {
      make_cleaning_rule(spec);
    } catch (const RuleParameterError& e) {
      if (!e.key.empty() && b.has(e.key)) b.fail(e.key, e.what());
      throw InputError({b.file(), spec.line, b.name_of(e.key.empty() ? "kind" : e.key)}, e.what());
    }
    p.cleaning.push_back(std::move(spec));
  }
}

}  // namespace

std::optional<char> delimiter_named(const std::string& v) {
  if (v == "tab" || v == "\t") return '\t';
  if (v == "comma" || v == ",") return ',';
  if (v == "semicolon" || v == ";") return ';';
  if (v == "space" || v == " ") return ' ';
  if (v.size() == 1 && v != "\n" && v != "\r" && v != "\"") return v[0];
  return std::nullopt;
}

Protocol parse_protocol_text(const std::string& text, const std::string& path) {
  Protocol p;
  p.path = path;
  p.text = text;
  toml::table root;
  try {
    root = toml::parse(text, path);
  } catch (const toml::parse_error& e) {
    throw InputError({path, e.source().begin.line, ""}, std::string("not valid TOML: ") + std::string(e.description()));
  }
  TomlSection top(root, "", path);
  if (auto study = top.table("study")) {
    p.study_name = study->string("name").value_or("");
    study->finish();
  }
  auto input = top.table("input");
  if (!input) throw InputError({path, 0, "input"}, "required section [input] is missing");
  parse_input(*input, p);
  if (auto screen = top.table("screen")) parse_screen(*screen, p);
  if (!p.screen && p.input.format != InputFormat::bids) {
    throw InputError({path, 0, "screen"}, "required section [screen] is missing (width_px, height_px, width_mm, height_mm, viewing_distance_mm)");
  }
  auto trials = top.table("trials");
  if (!trials) throw InputError({path, 0, "trials"}, "required section [trials] is missing (start and end message patterns)");
  parse_trials(*trials, p);
  check_filename_captures(p);
  if (p.input.format == InputFormat::fixations && p.trials.table_times_from_first_sample) {
    throw InputError({path, trials->line_of("time_origin"), "trials.time_origin"},
                     "a fixation list has no samples to count from: give the trial table's times on the list's own clock (time_origin = \"clock\")");
  }
  parse_design(top.table("design"), p);
  if (auto detection = top.table("detection")) {
    if (p.input.format == InputFormat::fixations) {
      detection->fail(detection->keys().empty() ? "method" : detection->keys().front(),
                      "[detection] has no effect with format = \"fixations\": the fixation list's rows are the events; remove the section");
    }
    parse_detection(*detection, p);
  }
  if (auto regions = top.table("regions")) {
    parse_regions(*regions, p);
    // Regions are looked up by the item each trial names.
    const auto names = trial_variable_names(p.trials);
    if (names && !names->count(p.design.item_variable)) {
      throw InputError({path, top.has("design") ? top.line_of("design") : regions->line(), top.has("design") ? "design.item" : "regions"},
                       "the regions are looked up by each trial's item, but " +
                           std::string(p.trials.source == TrialSource::messages ? "no [trials] pattern captures '" : "[trials] columns lacks '") +
                           p.design.item_variable + "' (" + variables_source(p.trials) + " " + listing(*names) +
                           "); add it, or name the item variable in [design] item = ...");
    }
  }
  if (auto alignment = top.table("alignment")) parse_alignment(*alignment, p);
  auto cleaning = top.table_array("cleaning");
  parse_cleaning(cleaning, p);
  top.finish();
  return p;
}

std::optional<std::string> protocol_file_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return std::nullopt;
  std::ostringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

Protocol parse_protocol_file(const std::string& path) {
  const std::optional<std::string> read = protocol_file_text(path);
  if (!read) throw InputError({path, 0, ""}, "cannot open the protocol file");
  const std::string& text = *read;
  // The HDF5 signature (HDF5 File Format Specification, "Format Signature").
  if (text.rfind("\x89HDF\r\n\x1a\n", 0) == 0) {
    throw InputError({path, 0, ""}, "is an HDF5 file (a study store?), not a protocol: this command takes the protocol file (TOML) "
                                    "first, and a store after -s/--store");
  }
  return parse_protocol_text(text, path);
}

}  // namespace gazemill
