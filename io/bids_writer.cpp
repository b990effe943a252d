#include "io/bids_writer.h"

#include <zlib.h>

#include <algorithm>
#include <cctype>
#include <optional>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <set>
#include <unistd.h>

#include "io/study_store.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;
using nlohmann::json;

namespace {

// The shortest text that reads back to the same float (std::to_chars).
std::string float_text(float v) {
  char buf[32];
  const auto r = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, r.ptr);
}

// Tabs and line breaks would split a message's row.
std::string cell(std::string s) {
  for (char& c : s) {
    if (c == '\t' || c == '\n' || c == '\r') c = ' ';
  }
  return s.empty() ? "n/a" : s;
}

// Seconds with six decimals: whole microseconds, exactly.
std::string seconds(Microseconds us) {
  const bool negative = us < 0;
  const auto a = static_cast<unsigned long long>(negative ? -us : us);
  char buf[48];
  std::snprintf(buf, sizeof buf, "%s%llu.%06llu", negative ? "-" : "", a / 1000000ULL, a % 1000000ULL);
  return buf;
}

class DatasetFolder {
 public:
  explicit DatasetFolder(fs::path root) : root_(std::move(root)) {}
  void text(const std::string& relative, const std::string& content) {
    const fs::path p = root_ / relative;
    fs::create_directories(p.parent_path());
    std::ofstream out(p, std::ios::binary);
    out << content;
    out.close();
    if (!out) throw InputError({p.string(), 0, ""}, "cannot write the file");
    ++files_;
  }
  void json_file(const std::string& relative, const json& j) { text(relative, j.dump(4) + "\n"); }
  void gzip(const std::string& relative, const std::string& content) {
    const fs::path p = root_ / relative;
    fs::create_directories(p.parent_path());
    gzFile f = gzopen(p.c_str(), "wb6");
    if (!f) throw InputError({p.string(), 0, ""}, "cannot write the file");
    const bool ok = content.empty() || gzwrite(f, content.data(), static_cast<unsigned>(content.size())) == static_cast<int>(content.size());
    if (gzclose(f) != Z_OK || !ok) throw InputError({p.string(), 0, ""}, "cannot write the compressed file");
    ++files_;
  }
  std::size_t files() const { return files_; }

 private:
  fs::path root_;
  std::size_t files_ = 0;
};

// Removes a half-written dataset unless it was renamed into place.
struct ScratchGuard {
  fs::path path;
  bool keep = false;
  ~ScratchGuard() {
    if (keep) return;
    std::error_code ec;
    fs::remove_all(path, ec);
  }
};

json screen_json(const ScreenGeometry& s) {
  // Metres and pixels (BIDS v1.11.0, "Task events > Stimulus presentation details").
  return {{"ScreenDistance", s.viewing_distance_mm / 1000.0},
          {"ScreenResolution", {s.width_px, s.height_px}},
          {"ScreenSize", {s.width_mm / 1000.0, s.height_mm / 1000.0}},
          {"ScreenOrigin", {"top", "left"}}};
}

bool same_screen(const ScreenGeometry& a, const ScreenGeometry& b) {
  return a.width_px == b.width_px && a.height_px == b.height_px && a.width_mm == b.width_mm && a.height_mm == b.height_mm &&
         a.viewing_distance_mm == b.viewing_distance_mm;
}

}  // namespace

std::string bids_label(const std::string& text) {
  std::string out;
  for (char c : text) {
    if (std::isalnum(static_cast<unsigned char>(c))) out += c;
  }
  return out;
}

BidsExportSummary write_bids_dataset(const StudyStoreReader& store, const std::string& folder, const std::string& task,
                                     const std::string& dataset_name, const std::string& tool_version) {
  const fs::path target = fs::absolute(fs::path(folder)).lexically_normal();
  std::error_code ec;
  if (fs::exists(target, ec) && !(fs::is_directory(target, ec) && fs::is_empty(target, ec))) {
    throw InputError({target.string(), 0, "--bids"}, "exists and is not an empty folder; the dataset is written into a new one");
  }
  if (!fs::is_directory(target.parent_path(), ec)) {
    throw InputError({target.string(), 0, "--bids"}, "the folder " + target.parent_path().string() + " does not exist");
  }
  if (task.empty()) throw InputError({"", 0, "task"}, "the BIDS task label is empty: it needs letters or digits");
  const std::vector<std::string> ids = store.recording_ids();
  if (ids.empty()) throw InputError({store.path(), 0, ""}, "has no recordings to export");

  // Labels: BIDS labels are letters and digits; recordings of one
  // participant and session are runs of the task.
  struct Planned {
    std::string id, sub, ses, run;
  };
  std::vector<Planned> plan;
  std::map<std::pair<std::string, std::string>, std::vector<std::size_t>> by_session;
  // Two names that become one label would be one subject or session in the
  // dataset (found in a newcomer's trial: p-01 and p01 became one sub-p01).
  std::map<std::string, std::string> participant_of_label;
  std::map<std::pair<std::string, std::string>, std::string> session_of_label;
  for (const auto& id : ids) {
    const Recording meta = store.read_recording(id, false);
    Planned p{id, bids_label(meta.participant), bids_label(meta.session), ""};
    if (p.sub.empty()) throw InputError({store.path(), 0, "participant"}, "recording " + id + ": its participant '" + meta.participant + "' has no letter or digit for a BIDS label");
    if (const auto [it, fresh] = participant_of_label.emplace(p.sub, meta.participant); !fresh && it->second != meta.participant) {
      throw InputError({store.path(), 0, "participant"}, "participants '" + it->second + "' and '" + meta.participant + "' would both be sub-" + p.sub +
                                                            " (BIDS labels are letters and digits only): rename one of them in the study's file names");
    }
    if (const auto [it, fresh] = session_of_label.emplace(std::make_pair(p.sub, p.ses), meta.session); !fresh && it->second != meta.session) {
      throw InputError({store.path(), 0, "session"}, "sessions '" + it->second + "' and '" + meta.session + "' of participant '" + meta.participant +
                                                        "' would both be ses-" + p.ses + " (BIDS labels are letters and digits only)");
    }
    by_session[{p.sub, p.ses}].push_back(plan.size());
    plan.push_back(p);
  }
  for (auto& [key, members] : by_session) {
    if (members.size() < 2) continue;
    for (std::size_t k = 0; k < members.size(); ++k) plan[members[k]].run = std::to_string(k + 1);
  }

  const fs::path scratch = target.parent_path() / ("." + target.filename().string() + ".tmp-" + std::to_string(::getpid()));
  fs::remove_all(scratch, ec);
  ScratchGuard guard{scratch};
  DatasetFolder out(scratch);
  BidsExportSummary summary;

  std::optional<double> shared_rate;
  std::optional<ScreenGeometry> shared_screen;
  bool rates_differ = false, screens_differ = false;
  std::set<std::string> participants;
  for (std::size_t k = 0; k < plan.size(); ++k) {
    const Planned& p = plan[k];
    Recording rec = store.read_recording(p.id, true);
    if (rec.samples.size() == 0 || (!rec.samples.has_left && !rec.samples.has_right)) {
      throw InputError({store.path(), 0, ""}, "recording " + p.id + " has no samples (its events were imported from a fixation list): "
                                    "a BIDS eye-tracking dataset holds samples");
    }
    participants.insert(p.sub);
    if (!shared_rate) shared_rate = rec.sample_rate_hz;
    rates_differ = rates_differ || *shared_rate != rec.sample_rate_hz;
    if (!shared_screen) shared_screen = rec.screen;
    screens_differ = screens_differ || !same_screen(*shared_screen, rec.screen);

    std::string base = "sub-" + p.sub;
    std::string folder_of = "sub-" + p.sub + "/";
    if (!p.ses.empty()) {
      base += "_ses-" + p.ses;
      folder_of += "ses-" + p.ses + "/";
    }
    base += "_task-" + task;
    if (!p.run.empty()) base += "_run-" + p.run;
    const std::string stem = folder_of + "beh/" + base;
    const DetectedEvents events = store.has_events(p.id) ? store.read_events(p.id) : DetectedEvents{};

    // Task events: one row per trial, onsets in seconds from the first sample.
    std::set<std::string> variables;
    for (const auto& t : rec.trials) {
      for (const auto& [name, value] : t.variables) variables.insert(name);
    }
    for (const char* reserved : {"onset", "duration", "trial"}) variables.erase(reserved);
    std::string tsv = "onset\tduration\ttrial";
    for (const auto& v : variables) tsv += "\t" + v;
    tsv += "\n";
    const Microseconds first = rec.samples.time_us.front();
    for (const auto& t : rec.trials) {
      tsv += seconds(t.start_us - first) + "\t" + seconds(t.end_us - t.start_us) + "\t" + cell(t.id);
      for (const auto& v : variables) tsv += "\t" + cell(t.variable(v));
      tsv += "\n";
    }
    out.text(stem + "_events.tsv", tsv);

    int label = 0;
    for (Eye eye : {Eye::left, Eye::right}) {
      if (!(eye == Eye::left ? rec.samples.has_left : rec.samples.has_right)) continue;
      const std::string file = stem + "_recording-eye" + std::to_string(++label);
      const EyeSamples& s = rec.samples.eye(eye);
      std::string rows;
      rows.reserve(rec.samples.size() * 40);
      for (std::size_t i = 0; i < rec.samples.size(); ++i) {
        rows += std::to_string(rec.samples.time_us[i]);
        if (s.valid[i]) rows += "\t" + float_text(s.x_px[i]) + "\t" + float_text(s.y_px[i]);
        else rows += "\tn/a\tn/a";
        rows += "\t" + (std::isnan(s.pupil[i]) ? std::string("n/a") : float_text(s.pupil[i])) + "\n";
      }
      out.gzip(file + "_physio.tsv.gz", rows);
      out.json_file(file + "_physio.json", {{"StartTime", 0}, {"RecordedEye", to_string(eye)}});

      // Physio events: the messages, and the events detected in this eye's data.
      std::vector<std::pair<Microseconds, std::string>> ev;
      for (const auto& m : rec.messages) ev.emplace_back(m.time_us, std::to_string(m.time_us) + "\tn/a\tn/a\t" + cell(m.text));
      auto add = [&](Microseconds a, Microseconds b, const char* kind) {
        ev.emplace_back(a, std::to_string(a) + "\t" + std::to_string(b - a) + "\t" + kind + "\tn/a");
        ++summary.event_rows;
      };
      for (const auto& f : events.fixations) {
        if (f.eye == eye) add(f.start_us, f.end_us, "fixation");
      }
      for (const auto& sc : events.saccades) {
        if (sc.eye == eye) add(sc.start_us, sc.end_us, "saccade");
      }
      for (const auto& b : events.blinks) {
        if (b.eye == eye) add(b.start_us, b.end_us, "blink");
      }
      std::stable_sort(ev.begin(), ev.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
      std::string text;
      for (const auto& [t, row] : ev) text += row + "\n";
      out.gzip(file + "_physioevents.tsv.gz", text);
    }
    ++summary.recordings;
  }

  // What every recording shares, at the root (the Inheritance Principle).
  json physio = {{"PhysioType", "eyetrack"},
                 {"Columns", {"timestamp", "x_coordinate", "y_coordinate", "pupil_size"}},
                 {"SampleCoordinateSystem", "gaze-on-screen"},
                 {"timestamp", {{"Description", "Time of the sample on the eye tracker's clock"}, {"Units", "us"}}},
                 {"x_coordinate", {{"Description", "Gaze position on the screen, from its left edge"}, {"Units", "pixel"}}},
                 {"y_coordinate", {{"Description", "Gaze position on the screen, from its top edge"}, {"Units", "pixel"}}},
                 {"pupil_size", {{"Description", "Pupil size as the tracker reported it"}, {"Units", "arbitrary"}}}};
  if (!rates_differ) physio["SamplingFrequency"] = *shared_rate;
  out.json_file("task-" + task + "_physio.json", physio);
  out.json_file("task-" + task + "_physioevents.json",
                {{"Columns", {"onset", "duration", "trial_type", "message"}},
                 {"OnsetSource", "timestamp"},
                 {"Description", "Messages the experiment wrote, and the fixations, saccades and blinks gazemill detected"},
                 {"onset", {{"Units", "us"}}},
                 {"duration", {{"Units", "us"}}},
                 {"trial_type", {{"Levels", {{"fixation", "A fixation"}, {"saccade", "A saccade"}, {"blink", "A blink"}}}}},
                 {"message", {{"Description", "A message the experiment wrote"}}}});
  json events = {{"TaskName", task},
                 {"onset", {{"Description", "Start of the trial, from the first sample of the recording"}, {"Units", "s"}}},
                 {"duration", {{"Units", "s"}}},
                 {"trial", {{"Description", "The trial's id"}}}};
  if (!screens_differ) events["StimulusPresentation"] = screen_json(*shared_screen);
  out.json_file("task-" + task + "_events.json", events);
  if (rates_differ || screens_differ) {
    // Recording-level values where the recordings differ.
    for (const auto& p : plan) {
      const Recording rec = store.read_recording(p.id, false);
      std::string stem = "sub-" + p.sub + "/" + (p.ses.empty() ? "" : "ses-" + p.ses + "/") + "beh/sub-" + p.sub +
                         (p.ses.empty() ? "" : "_ses-" + p.ses) + "_task-" + task + (p.run.empty() ? "" : "_run-" + p.run);
      if (screens_differ) out.json_file(stem + "_events.json", {{"StimulusPresentation", screen_json(rec.screen)}});
      if (rates_differ) {
        int label = 0;
        for (Eye eye : {Eye::left, Eye::right}) {
          if (!(eye == Eye::left ? rec.samples.has_left : rec.samples.has_right)) continue;
          out.json_file(stem + "_recording-eye" + std::to_string(++label) + "_physio.json",
                        {{"StartTime", 0}, {"RecordedEye", to_string(eye)}, {"SamplingFrequency", rec.sample_rate_hz}});
        }
      }
    }
  }
  std::string participants_tsv = "participant_id\n";
  for (const auto& s : participants) participants_tsv += "sub-" + s + "\n";
  out.text("participants.tsv", participants_tsv);
  out.json_file("dataset_description.json", {{"Name", dataset_name.empty() ? task : dataset_name},
                                             {"BIDSVersion", "1.11.0"},
                                             {"DatasetType", "raw"},
                                             {"GeneratedBy", {{{"Name", "gazemill"}, {"Version", tool_version}}}}});
  out.text("README", "# " + (dataset_name.empty() ? task : dataset_name) +
                         "\n\nEye-tracking samples and the events detected in them, written by gazemill " + tool_version +
                         " from its study store.\nTimes are microseconds on the eye tracker's clock; task events count seconds from each "
                         "recording's first sample.\n");
  summary.files = out.files();

  fs::remove(target, ec);  // an empty folder given as the target
  fs::rename(scratch, target, ec);
  if (ec) throw InputError({target.string(), 0, "--bids"}, "cannot move the dataset into place: " + ec.message());
  guard.keep = true;
  return summary;
}

}  // namespace gazemill
