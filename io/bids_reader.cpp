#include "io/bids_reader.h"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <functional>
#include <map>
#include <nlohmann/json.hpp>
#include <set>

#include "io/cell_table.h"
#include "pipeline/named_regex.h"

namespace gazemill {
namespace fs = std::filesystem;
using nlohmann::json;

namespace {

// Typed access to a merged sidecar: a missing field is an error of the
// lowest sidecar (where it belongs), a wrong value one of the file that gave it.
class Fields {
 public:
  Fields(const MergedSidecar& m, std::string lowest) : m_(m), lowest_(std::move(lowest)) {
    try {
      j_ = json::parse(m.json);
    } catch (const json::exception& e) {
      throw InputError({lowest_, 0, ""}, std::string("not valid JSON: ") + e.what());
    }
  }
  bool has(const std::string& key) const { return j_.contains(key); }
  std::string file_of(const std::string& key) const { return m_.file_of(key); }
  [[noreturn]] void fail(const std::string& key, const std::string& problem, const std::string& field = "") const {
    throw InputError({has(key) ? file_of(key) : lowest_, 0, field.empty() ? key : field}, problem);
  }
  const json& require(const std::string& key) const {
    if (!has(key)) fail(key, "required BIDS field is missing" + searched());
    return j_.at(key);
  }
  double number(const std::string& key) const {
    const json& v = require(key);
    if (!v.is_number()) fail(key, "expected a number, found " + v.dump());
    return v.get<double>();
  }
  std::string text(const std::string& key) const {
    const json& v = require(key);
    if (!v.is_string()) fail(key, "expected a text, found " + v.dump());
    return v.get<std::string>();
  }
  std::string text_or(const std::string& key, const std::string& fallback) const { return has(key) ? text(key) : fallback; }
  std::vector<std::string> texts(const std::string& key) const {
    const json& v = require(key);
    std::vector<std::string> out;
    if (v.is_array()) {
      for (const auto& e : v) {
        if (!e.is_string()) break;
        out.push_back(e.get<std::string>());
      }
    }
    if (!v.is_array() || out.size() != v.size()) fail(key, "expected a list of texts, found " + v.dump());
    return out;
  }
  // The Units of a column's description, e.g. "timestamp": {"Units": "ms"}.
  std::optional<std::string> units(const std::string& column) const {
    if (!has(column)) return std::nullopt;
    const json& c = j_.at(column);
    if (!c.is_object() || !c.contains("Units")) return std::nullopt;
    if (!c.at("Units").is_string()) fail(column, "expected Units as a text, found " + c.at("Units").dump(), column + ".Units");
    return c.at("Units").get<std::string>();
  }
  const json& raw() const { return j_; }
  const std::string& lowest() const { return lowest_; }

 private:
  std::string searched() const {
    std::string s = " (looked in";
    for (std::size_t i = 0; i < m_.files.size(); ++i) s += (i ? ", " : " ") + m_.files[i];
    return m_.files.size() > 1 ? s + ")" : "";
  }
  const MergedSidecar& m_;
  std::string lowest_;
  json j_;
};

bool in(const std::vector<std::string>& v, const std::string& s) { return std::find(v.begin(), v.end(), s) != v.end(); }

// "sub-01_task-read_recording-eye1_physio.tsv.gz" -> "sub-01_task-read"
std::string entities_before_recording(const std::string& name) {
  const auto pos = name.find("_recording-");
  return pos == std::string::npos ? name.substr(0, name.find("_physio")) : name.substr(0, pos);
}

std::string replace_suffix(const std::string& physio_tsv, const std::string& new_suffix) {
  const auto pos = physio_tsv.rfind("_physio.tsv");
  return physio_tsv.substr(0, pos) + new_suffix;
}

ScreenGeometry read_screen(const Fields& f) {
  const std::string path = f.file_of("StimulusPresentation");
  const json& sp = f.raw().at("StimulusPresentation");
  // Checked by hand, not by get<int>: that of a huge double is undefined.
  const auto bad = [&] {
    return InputError({path, 0, "StimulusPresentation"},
                      "expected ScreenDistance (m), ScreenResolution [w, h] (whole px) and ScreenSize [w, h] (m) as "
                      "positive numbers, found " + sp.dump());
  };
  const auto positive = [&](const json& v, double most) {
    if (!v.is_number() || !(v.get<double>() > 0.0 && v.get<double>() <= most)) throw bad();
    return v.get<double>();
  };
  const auto pair = [&](const char* name) -> const json& {
    const json& v = sp.at(name);
    if (!v.is_array() || v.size() != 2) throw bad();
    return v;
  };
  // Metres (BIDS v1.11.0, "Task events > Stimulus presentation details").
  // Published datasets have given centimetres (60, 120): no viewing distance
  // or screen is ten metres, so such a value is named instead of read as metres.
  constexpr double kMostMetres = 10.0;
  const double distance = positive(sp.at("ScreenDistance"), 1e6);
  if (distance > kMostMetres) {
    throw InputError({path, 0, "StimulusPresentation.ScreenDistance"},
                     "is in metres in BIDS, and " + sp.at("ScreenDistance").dump() +
                         " m is no viewing distance (centimetres?); correct the sidecar, or give the geometry in [screen]");
  }
  ScreenGeometry g;
  g.viewing_distance_mm = distance * 1000.0;
  const auto pixels = [&](const json& v) {
    const double n = positive(v, 1e6);
    if (n != std::floor(n)) throw bad();
    return static_cast<int>(n);
  };
  g.width_px = pixels(pair("ScreenResolution")[0]);
  g.height_px = pixels(pair("ScreenResolution")[1]);
  for (int i = 0; i < 2; ++i) {
    const double m = positive(pair("ScreenSize")[i], 1e6);
    if (m > kMostMetres) {
      throw InputError({path, 0, "StimulusPresentation.ScreenSize"}, "is in metres in BIDS, and " + pair("ScreenSize").dump() +
                                                                         " m is no screen (centimetres?); correct the sidecar, or "
                                                                         "give the geometry in [screen]");
    }
    (i == 0 ? g.width_mm : g.height_mm) = m * 1000.0;
  }
  return g;
}

// The columns of a physio events file and the unit of its onsets, from its
// merged sidecar (BIDS v1.11.0, "Physiology events": Columns and OnsetSource
// REQUIRED; "timestamp" puts the onsets on the physio file's timestamp clock).
struct PhysioEventsLayout {
  std::vector<std::string> columns;
};

PhysioEventsLayout physio_events_layout(const BidsEyeFiles& eye, const BidsInputSpec& names) {
  const Fields f(eye.events_sidecar, eye.events_json);
  PhysioEventsLayout l;
  std::string onset_source;
  if (f.has("OnsetSource")) {
    onset_source = f.text("OnsetSource");
  } else if (f.has("ForeignIndexColumn")) {
    // The name of BEP020's drafts, still in the published eyetracking_fmri
    // example's physio events sidecar; it meant what OnsetSource means now.
    onset_source = f.text("ForeignIndexColumn");
  } else {
    f.require("OnsetSource");
  }
  if (onset_source != "timestamp" && onset_source != names.timestamp_column) {
    f.fail(f.has("OnsetSource") ? "OnsetSource" : "ForeignIndexColumn",
           "only onsets on the physio clock (\"timestamp\") are supported, found \"" + onset_source + "\"");
  }
  l.columns = f.texts("Columns");
  if (!in(l.columns, "onset")) f.fail("Columns", "the column \"onset\" is REQUIRED in physio events");
  return l;
}

std::vector<Message> read_bids_events(const BidsEyeFiles& eye, const BidsInputSpec& names, std::vector<std::size_t>& lines) {
  const PhysioEventsLayout layout = physio_events_layout(eye, names);
  if (!in(layout.columns, "message")) return {};
  DelimitedReadOptions opt;
  opt.column_names = layout.columns;
  opt.layout.delimiter = '\t';
  opt.layout.time_column = "onset";
  opt.layout.time_unit = eye.sidecar.timestamp_unit;
  opt.layout.message_column = "message";
  opt.layout.missing_values = {"n/a", ""};
  opt.layout_key = eye.events_sidecar.file_of("Columns") + " Columns";
  NullSink none;
  DelimitedReadResult r = read_delimited(eye.events_tsv, opt, none);
  lines = std::move(r.message_lines);
  return std::move(r.messages);
}

}  // namespace

BidsPhysioSidecar bids_physio_fields(const MergedSidecar& sidecar, const std::string& lowest, const BidsInputSpec& names) {
  const Fields f(sidecar, lowest);
  BidsPhysioSidecar s;
  const std::string type = f.text_or("PhysioType", "generic");
  if (type != "eyetrack") f.fail("PhysioType", "expected \"eyetrack\", found \"" + type + "\"" + (f.has("PhysioType") ? "" : " (the default)"));
  s.sampling_frequency_hz = f.number("SamplingFrequency");
  if (!(s.sampling_frequency_hz > 0.0) || !std::isfinite(s.sampling_frequency_hz)) {
    f.fail("SamplingFrequency", "expected a positive number of samples per second");
  }
  s.start_time_s = f.number("StartTime");
  s.columns = f.texts("Columns");
  const std::string eye = f.text("RecordedEye");
  if (eye == "left") s.recorded_eye = Eye::left;
  else if (eye == "right") s.recorded_eye = Eye::right;
  else f.fail("RecordedEye", "expected \"left\" or \"right\" (cyclopean signals are not supported yet), found \"" + eye + "\"");
  const std::string coords = f.text("SampleCoordinateSystem");
  if (coords != "gaze-on-screen") f.fail("SampleCoordinateSystem", "expected \"gaze-on-screen\", found \"" + coords + "\"");
  for (const std::string* required : {&names.timestamp_column, &names.x_column, &names.y_column}) {
    if (!in(s.columns, *required)) {
      f.fail("Columns", "the eye-tracking column \"" + *required + "\" is required" +
                            (*required == "timestamp" || *required == "x_coordinate" || *required == "y_coordinate"
                                 ? std::string(" (name the dataset's own columns in [input.bids] if it uses others)")
                                 : std::string(" ([input.bids] names it)")));
    }
  }
  s.has_pupil = in(s.columns, names.pupil_column);
  if (names.pupil_column_named && !s.has_pupil) {
    f.fail("Columns", "the pupil column \"" + names.pupil_column + "\" that [input.bids] names is not among the Columns");
  }
  const auto tunit = f.units(names.timestamp_column);
  if (!tunit) {
    f.fail(names.timestamp_column, "the unit of the timestamp column is needed (\"s\", \"ms\", \"us\" or \"ns\")",
           names.timestamp_column + ".Units");
  }
  const auto tu = parse_time_unit(*tunit);
  if (!tu) f.fail(names.timestamp_column, "expected \"s\", \"ms\", \"us\" or \"ns\", found \"" + *tunit + "\"", names.timestamp_column + ".Units");
  s.timestamp_unit = *tu;
  for (const std::string* axis : {&names.x_column, &names.y_column}) {
    const auto u = f.units(*axis);
    if (names.gaze_in_pixels) continue;
    if (!u) f.fail(*axis, "Units is REQUIRED for gaze coordinates", *axis + ".Units");
    if (*u != "pixel" && *u != "px") {
      f.fail(*axis, "expected \"pixel\", found \"" + *u + "\" (gazemill works in screen pixels; if these are pixels whatever "
                    "the sidecar says, set gaze_in_pixels = true in [input.bids])", *axis + ".Units");
    }
  }
  return s;
}

BidsPhysioSidecar read_bids_physio_sidecar(const std::string& path, const BidsInputSpec& names) {
  return bids_physio_fields(merge_bids_sidecars({path}), path, names);
}

std::vector<BidsRecordingFiles> group_bids_recordings(const std::vector<std::string>& physio_paths, const BidsInputSpec& names) {
  std::map<std::string, BidsRecordingFiles> by_key;
  for (const auto& p : physio_paths) {
    const fs::path path(p);
    const std::string name = path.filename().string();
    if (name.find("_physio.tsv") == std::string::npos) {
      throw InputError({p, 0, ""}, "expected a BIDS *_physio.tsv.gz file name");
    }
    const std::string key = (path.parent_path() / entities_before_recording(name)).string();
    BidsEyeFiles eye;
    eye.physio_tsv = p;
    eye.physio_sidecar = inherited_sidecar(p, "physio");
    if (eye.physio_sidecar.empty()) {
      throw InputError({replace_suffix(p, "_physio.json"), 0, ""},
                       "no *_physio.json applies to " + p + " (one is REQUIRED: beside it, or above it by the Inheritance Principle)");
    }
    eye.physio_json = eye.physio_sidecar.files.back();
    eye.sidecar = bids_physio_fields(eye.physio_sidecar, eye.physio_json, names);
    for (const char* suffix : {"_physioevents.tsv.gz", "_physioevents.tsv"}) {
      const std::string ev = replace_suffix(p, suffix);
      if (!fs::exists(ev)) continue;
      eye.events_tsv = ev;
      eye.events_sidecar = inherited_sidecar(ev, "physioevents");
      if (eye.events_sidecar.empty()) {
        throw InputError({replace_suffix(p, "_physioevents.json"), 0, ""}, "no *_physioevents.json applies to " + ev + " (one is REQUIRED)");
      }
      eye.events_json = eye.events_sidecar.files.back();
      physio_events_layout(eye, names);  // its problems surface before any file is read
      break;
    }
    auto& rec = by_key[key];
    rec.key = key;
    for (const auto& other : rec.eyes) {
      if (other.sidecar.recorded_eye == eye.sidecar.recorded_eye) {
        throw InputError({eye.physio_sidecar.file_of("RecordedEye"), 0, "RecordedEye"},
                         "the same eye is also recorded in " + other.physio_tsv + " (for " + p + ")");
      }
    }
    rec.eyes.push_back(std::move(eye));
  }
  std::vector<BidsRecordingFiles> out;
  for (auto& [key, rec] : by_key) {
    std::sort(rec.eyes.begin(), rec.eyes.end(),
              [](const BidsEyeFiles& a, const BidsEyeFiles& b) { return a.sidecar.recorded_eye < b.sidecar.recorded_eye; });
    // The task's events belong to the run (the entities without recording-):
    // a task events file and its sidecars apply to it by inheritance.
    const std::string run_events = key + "_events.tsv";
    const auto tables = applicable_bids_files(run_events, "events", ".tsv");
    if (!tables.empty()) rec.task_events_tsv = tables.back();  // rule 5a: the lowest one
    rec.task_events_sidecar = merge_bids_sidecars(applicable_bids_files(run_events, "events", ".json"));
    if (!rec.task_events_sidecar.empty()) {
      try {
        const Fields f(rec.task_events_sidecar, rec.task_events_sidecar.files.back());
        const json& sp = f.has("StimulusPresentation") ? f.raw().at("StimulusPresentation") : json();
        if (sp.is_object() && sp.contains("ScreenDistance") && sp.contains("ScreenResolution") && sp.contains("ScreenSize")) {
          rec.screen = read_screen(f);
          rec.screen_source = f.file_of("StimulusPresentation");
        }
      } catch (const InputError& e) {
        rec.screen_error = e;
      }
    }
    out.push_back(std::move(rec));
  }
  return out;
}

std::vector<std::string> bids_input_files(const BidsRecordingFiles& files) {
  std::vector<std::string> out;
  auto add = [&](const std::string& f) {
    if (!f.empty() && !in(out, f)) out.push_back(f);
  };
  for (const auto& eye : files.eyes) {
    add(eye.physio_tsv);
    for (const auto& f : eye.physio_sidecar.files) add(f);
    add(eye.events_tsv);
    for (const auto& f : eye.events_sidecar.files) add(f);
  }
  add(files.task_events_tsv);
  for (const auto& f : files.task_events_sidecar.files) add(f);
  return out;
}

std::vector<TrackerEvent> read_bids_tracker_events(const BidsEyeFiles& eye, const BidsInputSpec& names) {
  if (eye.events_tsv.empty() || !names.keeps_tracker_events()) return {};
  const PhysioEventsLayout layout = physio_events_layout(eye, names);
  const std::string& column = names.tracker_event_column;
  if (!in(layout.columns, column)) {
    throw InputError({eye.events_sidecar.file_of("Columns"), 0, "Columns"},
                     "input.bids.tracker_events.column names \"" + column + "\", which is not among the Columns of " + eye.events_tsv);
  }
  std::vector<std::pair<SampleLabel, NamedRegex>> kinds;
  if (!names.tracker_fixation_pattern.empty()) kinds.emplace_back(SampleLabel::fixation, NamedRegex(names.tracker_fixation_pattern));
  if (!names.tracker_saccade_pattern.empty()) kinds.emplace_back(SampleLabel::saccade, NamedRegex(names.tracker_saccade_pattern));
  if (!names.tracker_blink_pattern.empty()) kinds.emplace_back(SampleLabel::blink, NamedRegex(names.tracker_blink_pattern));
  const CellTable table(eye.events_tsv, '\t', layout.columns);
  std::vector<TrackerEvent> out;
  for (std::size_t r = 0; r < table.rows(); ++r) {
    if (table.missing(r, column)) continue;
    const std::string& value = table.text(r, column);
    for (const auto& [kind, re] : kinds) {
      bool hit = false;
      try {
        hit = re.search(value).has_value();
      } catch (const std::length_error& e) {
        throw InputError({eye.events_tsv, table.line_of(r), column}, e.what());
      }
      if (!hit) continue;
      if (!in(layout.columns, "duration") || table.missing(r, "duration")) {
        throw InputError({eye.events_tsv, table.line_of(r), "duration"},
                         std::string("a tracker ") + to_string(kind) + " needs its duration; found none");
      }
      // Onset and duration on the timestamp clock, in its unit: the
      // specification's own example has a fixation at 7186806 lasting 72 on a
      // millisecond clock (BIDS v1.11.0, "Physiology events").
      TrackerEvent ev;
      ev.kind = kind;
      ev.eye = eye.sidecar.recorded_eye;
      ev.start_us = table.time(r, "onset", eye.sidecar.timestamp_unit);
      const Microseconds duration = table.time(r, "duration", eye.sidecar.timestamp_unit);
      if (duration < 0) throw InputError({eye.events_tsv, table.line_of(r), "duration"}, "a duration is zero or positive");
      ev.end_us = ev.start_us + duration;
      out.push_back(ev);
      break;
    }
  }
  std::stable_sort(out.begin(), out.end(), [](const TrackerEvent& a, const TrackerEvent& b) { return a.start_us < b.start_us; });
  return out;
}

DelimitedReadResult read_bids_recording(const BidsRecordingFiles& files, const BidsReadOptions& options, SampleSink& sink,
                                        std::vector<TrackerEvent>* tracker_events) {
  const BidsInputSpec& names = options.names;
  auto options_for = [&](const BidsEyeFiles& eye) {
    DelimitedReadOptions opt;
    opt.column_names = eye.sidecar.columns;
    opt.layout.delimiter = '\t';
    opt.layout.time_column = names.timestamp_column;
    opt.layout.time_unit = eye.sidecar.timestamp_unit;
    opt.layout.missing_values = options.missing_values;
    opt.layout.missing_values.push_back("n/a");
    opt.layout.zero_gaze_is_missing = names.zero_gaze_is_missing;
    EyeColumnNames cols{names.x_column, names.y_column, ""};
    if (eye.sidecar.has_pupil) cols.pupil = names.pupil_column;
    if (eye.sidecar.recorded_eye == Eye::left) opt.layout.left = cols;
    else opt.layout.right = cols;
    opt.duplicate_timestamps = options.duplicates;
    opt.layout_key = eye.physio_sidecar.file_of("Columns") + " Columns";
    return opt;
  };

  DelimitedReadResult result;
  if (files.eyes.size() == 1) {
    result = read_delimited(files.eyes[0].physio_tsv, options_for(files.eyes[0]), sink);
  } else {
    // Two eyes in two files on one clock: read both, check the clocks agree, interleave.
    CollectingSink a, b;
    DelimitedReadResult ra = read_delimited(files.eyes[0].physio_tsv, options_for(files.eyes[0]), a);
    DelimitedReadResult rb = read_delimited(files.eyes[1].physio_tsv, options_for(files.eyes[1]), b);
    if (a.samples.time_us != b.samples.time_us) {
      throw InputError({files.eyes[1].physio_tsv, 0, names.timestamp_column},
                       "the two eyes' files must share timestamps row by row, but differ from " + files.eyes[0].physio_tsv);
    }
    SampleColumns both = std::move(a.samples);
    both.has_right = true;
    both.right = std::move(b.samples.right);
    const std::size_t chunk = 1 << 16;
    SampleColumns part;
    part.has_left = part.has_right = true;
    for (std::size_t i = 0; i < both.size(); i += chunk) {
      const std::size_t j = std::min(both.size(), i + chunk);
      part.clear();
      part.time_us.assign(both.time_us.begin() + i, both.time_us.begin() + j);
      for (Eye e : {Eye::left, Eye::right}) {
        const EyeSamples& from = both.eye(e);
        EyeSamples& to = part.eye(e);
        to.x_px.assign(from.x_px.begin() + i, from.x_px.begin() + j);
        to.y_px.assign(from.y_px.begin() + i, from.y_px.begin() + j);
        to.pupil.assign(from.pupil.begin() + i, from.pupil.begin() + j);
        to.valid.assign(from.valid.begin() + i, from.valid.begin() + j);
      }
      sink.append(part);
    }
    result = std::move(ra);
    result.has_right = true;
    result.missing_right = rb.missing_right;
    for (const auto& [k, n] : rb.repairs) result.repairs[k] += n;
  }

  // Messages: the union of the eyes' event files, without repeats.
  std::set<std::pair<Microseconds, std::string>> seen;
  for (const auto& eye : files.eyes) {
    if (eye.events_tsv.empty()) continue;
    std::vector<std::size_t> lines;
    const auto msgs = read_bids_events(eye, names, lines);
    for (std::size_t i = 0; i < msgs.size(); ++i) {
      if (seen.insert({msgs[i].time_us, msgs[i].text}).second) {
        result.messages.push_back(msgs[i]);
        result.message_lines.push_back(lines[i]);
      }
    }
    if (tracker_events) {
      const auto ev = read_bids_tracker_events(eye, names);
      tracker_events->insert(tracker_events->end(), ev.begin(), ev.end());
    }
  }
  if (tracker_events) {
    std::stable_sort(tracker_events->begin(), tracker_events->end(),
                     [](const TrackerEvent& a, const TrackerEvent& b) { return a.start_us < b.start_us; });
  }
  return result;
}

}  // namespace gazemill
