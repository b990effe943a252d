#include "io/bids_reader.h"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <set>

#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;
using nlohmann::json;

namespace {

json load_json(const std::string& path) {
  std::ifstream in(path);
  if (!in) throw InputError({path, 0, ""}, "cannot open JSON sidecar");
  try {
    return json::parse(in);
  } catch (const json::exception& e) {  // parse_error, and out_of_range for a number past a double (found by fuzzing)
    throw InputError({path, 0, ""}, std::string("not valid JSON: ") + e.what());
  }
}

const json& require(const json& j, const std::string& path, const std::string& field) {
  if (!j.contains(field)) throw InputError({path, 0, field}, "required BIDS field is missing");
  return j.at(field);
}

// "sub-01_task-read_recording-eye1_physio.tsv.gz" -> "sub-01_task-read"
std::string entities_before_recording(const std::string& name) {
  const auto pos = name.find("_recording-");
  return pos == std::string::npos ? name.substr(0, name.find("_physio")) : name.substr(0, pos);
}

std::string replace_suffix(const std::string& physio_tsv, const std::string& new_suffix) {
  const auto pos = physio_tsv.rfind("_physio.tsv");
  return physio_tsv.substr(0, pos) + new_suffix;
}

std::optional<std::string> task_label(const std::string& key) {
  const auto pos = key.find("task-");
  if (pos == std::string::npos) return std::nullopt;
  const auto end = key.find('_', pos);
  return key.substr(pos, end == std::string::npos ? std::string::npos : end - pos);
}

// The task's events sidecar: beside the data first, then up the folders
// (BIDS inheritance: a top-level task-<label>_events.json applies to all).
std::optional<std::string> find_events_json(const fs::path& dir, const std::string& key) {
  const fs::path beside = dir / (key + "_events.json");
  if (fs::exists(beside)) return beside.string();
  const auto task = task_label(key);
  if (!task) return std::nullopt;
  for (fs::path d = dir; !d.empty(); d = d.parent_path()) {
    const fs::path top = d / (*task + "_events.json");
    if (fs::exists(top)) return top.string();
    if (fs::exists(d / "dataset_description.json") || d == d.parent_path()) break;
  }
  return std::nullopt;
}

std::optional<ScreenGeometry> read_screen(const std::string& path) {
  const json j = load_json(path);
  if (!j.contains("StimulusPresentation")) return std::nullopt;
  const json& sp = j.at("StimulusPresentation");
  for (const char* f : {"ScreenDistance", "ScreenResolution", "ScreenSize"}) {
    if (!sp.contains(f)) return std::nullopt;
  }
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
  const auto pair = [&](const char* f) -> const json& {
    const json& v = sp.at(f);
    if (!v.is_array() || v.size() != 2) throw bad();
    return v;
  };
  ScreenGeometry g;
  g.viewing_distance_mm = positive(sp.at("ScreenDistance"), 1e3) * 1000.0;
  const auto pixels = [&](const json& v) {
    const double n = positive(v, 1e6);
    if (n != std::floor(n)) throw bad();
    return static_cast<int>(n);
  };
  g.width_px = pixels(pair("ScreenResolution")[0]);
  g.height_px = pixels(pair("ScreenResolution")[1]);
  g.width_mm = positive(pair("ScreenSize")[0], 1e3) * 1000.0;
  g.height_mm = positive(pair("ScreenSize")[1], 1e3) * 1000.0;
  return g;
}

std::vector<Message> read_bids_events(const BidsEyeFiles& eye, std::vector<std::size_t>& lines) {
  const json j = load_json(eye.events_json);
  DelimitedReadOptions opt;
  try {
    const std::string onset_source = require(j, eye.events_json, "OnsetSource").get<std::string>();
    if (onset_source != "timestamp") {
      throw InputError({eye.events_json, 0, "OnsetSource"},
                       "only OnsetSource \"timestamp\" (onsets on the physio clock) is supported, found \"" + onset_source + "\"");
    }
    opt.column_names = require(j, eye.events_json, "Columns").get<std::vector<std::string>>();
  } catch (const json::exception& e) {
    throw InputError({eye.events_json, 0, ""}, std::string("a field has the wrong type: ") + e.what());
  }
  if (std::find(opt.column_names.begin(), opt.column_names.end(), "message") == opt.column_names.end()) return {};
  opt.layout.delimiter = '\t';
  opt.layout.time_column = "onset";
  opt.layout.time_unit = eye.sidecar.timestamp_unit;
  opt.layout.message_column = "message";
  opt.layout.missing_values = {"n/a", ""};
  opt.layout_key = eye.events_json + " Columns";
  NullSink none;
  DelimitedReadResult r = read_delimited(eye.events_tsv, opt, none);
  lines = std::move(r.message_lines);
  return std::move(r.messages);
}

// The sidecar's fields; nlohmann's json::exception for a value of the wrong type.
BidsPhysioSidecar physio_sidecar_fields(const json& j, const std::string& path) {
  BidsPhysioSidecar s;
  const std::string type = j.value("PhysioType", "generic");
  if (type != "eyetrack") {
    throw InputError({path, 0, "PhysioType"}, "expected \"eyetrack\", found \"" + type + "\"");
  }
  s.sampling_frequency_hz = require(j, path, "SamplingFrequency").get<double>();
  if (!(s.sampling_frequency_hz > 0.0) || !std::isfinite(s.sampling_frequency_hz)) {
    throw InputError({path, 0, "SamplingFrequency"}, "expected a positive number of samples per second");
  }
  s.start_time_s = require(j, path, "StartTime").get<double>();
  s.columns = require(j, path, "Columns").get<std::vector<std::string>>();
  const std::string eye = require(j, path, "RecordedEye").get<std::string>();
  if (eye == "left") s.recorded_eye = Eye::left;
  else if (eye == "right") s.recorded_eye = Eye::right;
  else throw InputError({path, 0, "RecordedEye"}, "expected \"left\" or \"right\" (cyclopean signals are not supported yet), found \"" + eye + "\"");
  const std::string coords = require(j, path, "SampleCoordinateSystem").get<std::string>();
  if (coords != "gaze-on-screen") {
    throw InputError({path, 0, "SampleCoordinateSystem"}, "expected \"gaze-on-screen\", found \"" + coords + "\"");
  }
  for (const char* required : {"timestamp", "x_coordinate", "y_coordinate"}) {
    if (std::find(s.columns.begin(), s.columns.end(), required) == s.columns.end()) {
      throw InputError({path, 0, "Columns"}, std::string("the eye-tracking column \"") + required + "\" is required");
    }
  }
  if (!j.contains("timestamp") || !j.at("timestamp").contains("Units")) {
    throw InputError({path, 0, "timestamp.Units"}, "the unit of the timestamp column is needed (\"s\", \"ms\", \"us\" or \"ns\")");
  }
  const std::string unit = j.at("timestamp").at("Units").get<std::string>();
  const auto tu = parse_time_unit(unit);
  if (!tu) throw InputError({path, 0, "timestamp.Units"}, "expected \"s\", \"ms\", \"us\" or \"ns\", found \"" + unit + "\"");
  s.timestamp_unit = *tu;
  for (const char* axis : {"x_coordinate", "y_coordinate"}) {
    if (!j.contains(axis) || !j.at(axis).contains("Units")) {
      throw InputError({path, 0, std::string(axis) + ".Units"}, "Units is REQUIRED for gaze coordinates");
    }
    const std::string u = j.at(axis).at("Units").get<std::string>();
    if (u != "pixel" && u != "px") throw InputError({path, 0, std::string(axis) + ".Units"}, "expected \"pixel\", found \"" + u + "\"");
  }
  return s;
}

}  // namespace

BidsPhysioSidecar read_bids_physio_sidecar(const std::string& path) {
  const json j = load_json(path);
  // One try for every field: a value of the wrong JSON type anywhere (a
  // number for a unit, say) is an input error naming the file, not a crash.
  try {
    return physio_sidecar_fields(j, path);
  } catch (const json::exception& e) {
    throw InputError({path, 0, ""}, std::string("a field has the wrong type: ") + e.what());
  }
}

std::vector<BidsRecordingFiles> group_bids_recordings(const std::vector<std::string>& physio_paths) {
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
    eye.physio_json = replace_suffix(p, "_physio.json");
    if (!fs::exists(eye.physio_json)) throw InputError({eye.physio_json, 0, ""}, "the sidecar of " + p + " is missing (it is REQUIRED)");
    eye.sidecar = read_bids_physio_sidecar(eye.physio_json);
    const std::string ev = replace_suffix(p, "_physioevents.tsv.gz");
    if (fs::exists(ev)) {
      eye.events_tsv = ev;
      eye.events_json = replace_suffix(p, "_physioevents.json");
      if (!fs::exists(eye.events_json)) throw InputError({eye.events_json, 0, ""}, "the sidecar of " + ev + " is missing");
    }
    auto& rec = by_key[key];
    rec.key = key;
    for (const auto& other : rec.eyes) {
      if (other.sidecar.recorded_eye == eye.sidecar.recorded_eye) {
        throw InputError({p, 0, "RecordedEye"}, "the same eye is also recorded in " + other.physio_tsv);
      }
    }
    rec.eyes.push_back(std::move(eye));
  }
  std::vector<BidsRecordingFiles> out;
  for (auto& [key, rec] : by_key) {
    std::sort(rec.eyes.begin(), rec.eyes.end(),
              [](const BidsEyeFiles& a, const BidsEyeFiles& b) { return a.sidecar.recorded_eye < b.sidecar.recorded_eye; });
    const fs::path k(key);
    if (auto ej = find_events_json(k.parent_path(), k.filename().string())) {
      rec.screen = read_screen(*ej);
      if (rec.screen) rec.screen_source = *ej;
    }
    out.push_back(std::move(rec));
  }
  return out;
}

DelimitedReadResult read_bids_recording(const BidsRecordingFiles& files, const std::vector<std::string>& missing_values,
                                        DuplicateTimestampPolicy duplicates, SampleSink& sink) {
  auto options_for = [&](const BidsEyeFiles& eye) {
    DelimitedReadOptions opt;
    opt.column_names = eye.sidecar.columns;
    opt.layout.delimiter = '\t';
    opt.layout.time_column = "timestamp";
    opt.layout.time_unit = eye.sidecar.timestamp_unit;
    opt.layout.missing_values = missing_values;
    opt.layout.missing_values.push_back("n/a");
    EyeColumnNames cols{"x_coordinate", "y_coordinate", ""};
    if (std::find(opt.column_names.begin(), opt.column_names.end(), "pupil_size") != opt.column_names.end()) cols.pupil = "pupil_size";
    if (eye.sidecar.recorded_eye == Eye::left) opt.layout.left = cols;
    else opt.layout.right = cols;
    opt.duplicate_timestamps = duplicates;
    opt.layout_key = eye.physio_json + " Columns";
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
      throw InputError({files.eyes[1].physio_tsv, 0, "timestamp"},
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
    const auto msgs = read_bids_events(eye, lines);
    for (std::size_t i = 0; i < msgs.size(); ++i) {
      if (seen.insert({msgs[i].time_us, msgs[i].text}).second) {
        result.messages.push_back(msgs[i]);
        result.message_lines.push_back(lines[i]);
      }
    }
  }
  return result;
}

}  // namespace gazemill
