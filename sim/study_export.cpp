#include "sim/study_export.h"

#include <fmt/format.h>
#include <zlib.h>

#include <atomic>
#include <cmath>
#include <future>
#include <thread>

#include "pipeline/regions.h"
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <stdexcept>

namespace gazemill::sim {
namespace fs = std::filesystem;

namespace {

class GzWriter {
 public:
  GzWriter(const fs::path& path, int level) : path_(path.string()) {
    fs::create_directories(path.parent_path());
    f_ = gzopen(path_.c_str(), ("wb" + std::to_string(level)).c_str());
    if (!f_) throw std::runtime_error("cannot write " + path_);
    gzbuffer(f_, 1 << 18);
  }
  ~GzWriter() {
    if (f_) gzclose(f_);
  }
  void write(const fmt::memory_buffer& buf) {
    if (buf.size() && gzwrite(f_, buf.data(), static_cast<unsigned>(buf.size())) == 0) throw std::runtime_error("write failed: " + path_);
  }

 private:
  std::string path_;
  gzFile f_ = nullptr;
};

void write_text(const fs::path& path, const std::string& text) {
  fs::create_directories(path.parent_path());
  std::ofstream out(path, std::ios::binary);
  out << text;
  if (!out) throw std::runtime_error("cannot write " + path.string());
}

void put_value(fmt::memory_buffer& b, float v, const char* format_missing, int decimals) {
  if (std::isnan(v)) {
    fmt::format_to(std::back_inserter(b), "{}", format_missing);
  } else if (decimals == 0) {
    fmt::format_to(std::back_inserter(b), "{:.0f}", v);
  } else {
    fmt::format_to(std::back_inserter(b), "{:.2f}", v);
  }
}

// Samples and messages of one recording in time order; `bids` drops the header,
// the message column and writes n/a for missing values.
void write_samples(const Recording& r, const fs::path& path, int level, bool bids, Eye only_eye, bool one_eye) {
  GzWriter out(path, level);
  fmt::memory_buffer b;
  const char* missing = bids ? "n/a" : ".";
  const auto& s = r.samples;
  const bool two = s.has_left && s.has_right && !one_eye;
  if (!bids) {
    const std::string_view header = two ? "time_us\tleft_x\tleft_y\tleft_pupil\tright_x\tright_y\tright_pupil\tmessage\n"
                                        : "time_us\tgaze_x\tgaze_y\tpupil\tmessage\n";
    b.append(header.data(), header.data() + header.size());
  }
  std::size_t m = 0;
  const std::size_t cols = two ? 6 : 3;
  for (std::size_t i = 0; i < s.size(); ++i) {
    while (!bids && m < r.messages.size() && r.messages[m].time_us <= s.time_us[i]) {
      fmt::format_to(std::back_inserter(b), "{}", r.messages[m].time_us);
      for (std::size_t c = 0; c < cols; ++c) b.push_back('\t');
      fmt::format_to(std::back_inserter(b), "\t{}\n", r.messages[m].text);
      ++m;
    }
    fmt::format_to(std::back_inserter(b), "{}", s.time_us[i]);
    for (Eye e : {Eye::left, Eye::right}) {
      if (one_eye ? e != only_eye : (e == Eye::left ? !s.has_left : !s.has_right)) continue;
      const EyeSamples& eye = s.eye(e);
      b.push_back('\t');
      put_value(b, eye.x_px[i], missing, 2);
      b.push_back('\t');
      put_value(b, eye.y_px[i], missing, 2);
      b.push_back('\t');
      put_value(b, eye.pupil[i], missing, 0);
    }
    if (!bids) b.push_back('\t');
    b.push_back('\n');
    if (b.size() > (1 << 20)) {
      out.write(b);
      b.clear();
    }
  }
  for (; !bids && m < r.messages.size(); ++m) {
    fmt::format_to(std::back_inserter(b), "{}", r.messages[m].time_us);
    for (std::size_t c = 0; c < cols; ++c) b.push_back('\t');
    fmt::format_to(std::back_inserter(b), "\t{}\n", r.messages[m].text);
  }
  out.write(b);
}

// How both protocols find the trials in the messages the simulator writes.
constexpr const char* kTrialsSection = R"([trials]
start = '^begin trial (?<trial>\d+)$'
end = '^end trial (?<trial>\d+)$'
variables = ['^item (?<item>\S+) condition (?<condition>\S+)$']

[trials.markers]
text_shown = '^text shown$'

[design]
item = "item"
factors = ["condition"]
)";

std::string delimited_protocol(const SimulatedStudy& st) {
  const auto& sc = st.config.screen;
  const bool two = st.config.signal.binocular;
  std::string eyes = two ? "[input.table.left]\nx_column = \"left_x\"\ny_column = \"left_y\"\npupil_column = \"left_pupil\"\n\n"
                           "[input.table.right]\nx_column = \"right_x\"\ny_column = \"right_y\"\npupil_column = \"right_pupil\"\n"
                         : "[input.table.left]\nx_column = \"gaze_x\"\ny_column = \"gaze_y\"\npupil_column = \"pupil\"\n";
  return fmt::format(R"(# gazemill protocol for the simulated study "{0}" (written by gazemill simulate).
[study]
name = "{0}"

[input]
format = "delimited"
files = ["raw/*.tsv.gz"]
filename_pattern = '(?<participant>p\d+)_s(?<session>\d+)'

[input.table]
delimiter = "tab"
time_column = "time_us"
time_unit = "us"
message_column = "message"
missing_values = ["", "."]

{1}
[screen]
width_px = {2}
height_px = {3}
width_mm = {4}
height_mm = {5}
viewing_distance_mm = {6}

{12}
[regions]
items_file = "items.tsv"
char_width_px = {7}
line_height_px = {8}
left_margin_px = {9}
first_line_top_px = {10}
wrap_width_chars = {11}
)",
                     st.config.design.name, eyes, sc.width_px, sc.height_px, sc.width_mm, sc.height_mm,
                     sc.viewing_distance_mm, st.config.layout.char_width_px, st.config.layout.line_height_px,
                     st.config.layout.left_margin_px, st.config.layout.first_line_top_px, st.config.layout.wrap_width_chars,
                     kTrialsSection);
}

std::string bids_protocol(const SimulatedStudy& st) {
  return fmt::format(R"(# gazemill protocol for the BIDS copy of the simulated study "{0}".
[study]
name = "{0}-bids"

[input]
format = "bids"
files = ["bids/sub-*/beh/*_physio.tsv.gz"]

{1})",
                     st.config.design.name, kTrialsSection);
}

void write_bids_dataset_files(const SimulatedStudy& st, const fs::path& root) {
  using nlohmann::json;
  const auto& sc = st.config.screen;
  write_text(root / "dataset_description.json",
             json{{"Name", st.config.design.name + " (simulated by gazemill)"}, {"BIDSVersion", "1.11.0"}, {"DatasetType", "raw"}}.dump(2));
  const std::string task = "task-" + st.config.design.task;
  write_text(root / (task + "_events.json"),
             json{{"StimulusPresentation",
                   {{"ScreenDistance", sc.viewing_distance_mm / 1000.0},
                    {"ScreenOrigin", {"top", "left"}},
                    {"ScreenResolution", {sc.width_px, sc.height_px}},
                    {"ScreenSize", {sc.width_mm / 1000.0, sc.height_mm / 1000.0}},
                    {"ScreenRefreshRate", 60}}}}
                 .dump(2));
}

void write_bids_recording(const SimulatedStudy& st, const SimulatedRecording& sr, const fs::path& root, int level) {
  using nlohmann::json;
  const std::string task = "task-" + st.config.design.task;
  {
    const Recording& r = sr.recording;
    const std::string sub = "sub-" + r.participant;
    const fs::path dir = root / sub / "beh";
    int label = 1;
    for (Eye e : {Eye::left, Eye::right}) {
      if ((e == Eye::left && !r.samples.has_left) || (e == Eye::right && !r.samples.has_right)) continue;
      const std::string base = sub + "_" + task + "_recording-eye" + std::to_string(label++);
      write_samples(r, dir / (base + "_physio.tsv.gz"), level, true, e, true);
      json side = {{"SamplingFrequency", r.sample_rate_hz},
                   {"StartTime", 0},
                   {"Columns", {"timestamp", "x_coordinate", "y_coordinate", "pupil_size"}},
                   {"PhysioType", "eyetrack"},
                   {"RecordedEye", to_string(e)},
                   {"SampleCoordinateSystem", "gaze-on-screen"},
                   {"Manufacturer", "gazemill simulator"},
                   {"timestamp", {{"Description", "time of the sample on the tracker clock"}, {"Units", "us"}}},
                   {"x_coordinate", {{"Description", "gaze position on the screen"}, {"Units", "pixel"}}},
                   {"y_coordinate", {{"Description", "gaze position on the screen"}, {"Units", "pixel"}}},
                   {"pupil_size", {{"Description", "pupil area", }, {"Units", "arbitrary"}}}};
      write_text(dir / (base + "_physio.json"), side.dump(2));
      GzWriter ev(dir / (base + "_physioevents.tsv.gz"), level);
      fmt::memory_buffer b;
      for (const auto& m : r.messages) fmt::format_to(std::back_inserter(b), "{}\tn/a\tn/a\t{}\n", m.time_us, m.text);
      ev.write(b);
      write_text(dir / (base + "_physioevents.json"),
                 json{{"Columns", {"onset", "duration", "trial_type", "message"}},
                      {"OnsetSource", "timestamp"},
                      {"Description", "messages written by the experiment"}}
                     .dump(2));
    }
  }
}

}  // namespace

std::string export_study(const SimulatedStudy& st, const std::string& folder, const ExportOptions& opt) {
  const fs::path root(folder);
  fs::create_directories(root);
  // Compressing the exports is most of the work: one participant per core.
  std::atomic<std::size_t> next{0};
  auto work = [&] {
    for (std::size_t k = next++; k < st.recordings.size(); k = next++) {
      const SimulatedRecording& sr = st.recordings[k];
      const Recording& r = sr.recording;
      if (opt.delimited) {
        write_samples(r, root / "raw" / (r.participant + "_s" + r.session + ".tsv.gz"), opt.gzip_level, false, Eye::left, false);
      }
      if (opt.bids) write_bids_recording(st, sr, root / "bids", opt.gzip_level);
      GzWriter labels(root / "truth" / (r.participant + "_labels.tsv.gz"), opt.gzip_level);
      fmt::memory_buffer b;
      fmt::format_to(std::back_inserter(b), "time_us\tlabel\n");
      for (std::size_t i = 0; i < sr.truth.labels.size(); ++i) {
        fmt::format_to(std::back_inserter(b), "{}\t{}\n", r.samples.time_us[i], to_string(sr.truth.labels[i]));
      }
      labels.write(b);
    }
  };
  if (opt.bids) write_bids_dataset_files(st, root / "bids");
  {
    std::vector<std::future<void>> workers;
    const unsigned n = std::max(1u, std::min<unsigned>(std::thread::hardware_concurrency(), static_cast<unsigned>(st.recordings.size())));
    for (unsigned i = 0; i < n; ++i) workers.push_back(std::async(std::launch::async, work));
    for (auto& w : workers) w.get();
  }

  std::string fix = "participant\ttrial\tstart_us\tend_us\tx_px\ty_px\tline\tregion\tchar_index\n";
  std::string drift = "participant\ttrial\toffset_px\tslope\tsession_px\n";
  std::string trials = "participant\ttrial\titem\tcondition\ttarget_region\n";
  for (const auto& sr : st.recordings) {
    const std::string& p = sr.recording.participant;
    for (const auto& f : sr.truth.fixations) {
      fix += fmt::format("{}\t{}\t{}\t{}\t{:.2f}\t{:.2f}\t{}\t{}\t{}\n", p, f.trial, f.start_us, f.end_us, f.x_px, f.y_px, f.line,
                         f.region, f.char_index);
    }
    for (const auto& d : sr.truth.drift) drift += fmt::format("{}\t{}\t{:.3f}\t{:.5f}\t{:.3f}\n", p, d.trial, d.offset_px, d.slope, d.session_px);
    for (const auto& t : sr.recording.trials) {
      std::size_t item = 0, cond = 0;
      for (std::size_t i = 0; i < st.config.design.items.size(); ++i) if (st.config.design.items[i].id == t.variable("item")) item = i;
      for (std::size_t c = 0; c < st.config.design.conditions.size(); ++c) if (st.config.design.conditions[c] == t.variable("condition")) cond = c;
      trials += fmt::format("{}\t{}\t{}\t{}\t{}\n", p, t.id, t.variable("item"), t.variable("condition"), st.target_regions[item][cond]);
    }
  }
  write_text(root / "truth" / "fixations.tsv", fix);
  write_text(root / "truth" / "drift.tsv", drift);
  write_text(root / "truth" / "trials.tsv", trials);

  // Regions twice: as item text to lay out, and as boxes (one row per region and line).
  std::string items = "item\tcondition\ttext\troles\n";
  std::string regions = "item\tcondition\tregion\tlabel\trole\tleft_px\ttop_px\tright_px\tbottom_px\tline\tletters\twords\n";
  for (std::size_t i = 0; i < st.items.size(); ++i) {
    for (std::size_t c = 0; c < st.items[i].size(); ++c) {
      const int target = st.target_regions[i][c];
      std::map<int, std::string> roles;
      if (target >= 0) {
        roles[target] = "target";
        roles[target + 1] = "spillover";
      }
      const std::string& cond = st.config.design.conditions[c];
      const ResolvedItem resolved = resolve_item(st.config.design.items[i], c);
      std::string role_text;
      for (const auto& [r, name] : roles) role_text += (role_text.empty() ? "" : " ") + std::to_string(r + 1) + "=" + name;
      items += fmt::format("{}\t{}\t{}\t{}\n", st.items[i][c].item, cond, resolved.marked_text, role_text);
      const RegionLayout layout = region_layout_from_text(st.items[i][c], st.config.layout, {cond}, roles);
      for (const auto& r : layout.regions) {
        for (const auto& b : r.boxes) {
          regions += fmt::format("{}\t{}\t{}\t{}\t{}\t{:.1f}\t{:.1f}\t{:.1f}\t{:.1f}\t{}\t{}\t{}\n", layout.item, cond, r.id + 1, r.label,
                                 r.role.empty() ? "" : r.role, b.left_px, b.top_px, b.right_px, b.bottom_px, b.line + 1, r.letters, r.words);
        }
      }
    }
  }
  write_text(root / "items.tsv", items);
  write_text(root / "regions.tsv", regions);

  const auto& sg = st.config.signal;
  nlohmann::json about = {
      {"generator", "gazemill simulate"},
      {"note", "Invented data from a simulated reader; not recordings of people."},
      {"seed", st.config.seed},
      {"participants", st.config.design.participants},
      {"items", st.config.design.items.size()},
      {"conditions", st.config.design.conditions},
      {"hard_condition", st.config.design.conditions[st.config.hard_condition]},
      {"sample_rate_hz", sg.sample_rate_hz},
      {"binocular", sg.binocular},
      {"noise_rms_s2s_deg", sg.noise_rms_s2s_deg},
      {"post_saccadic_oscillation", sg.post_saccadic_oscillation},
      {"blink_probability_per_saccade", sg.blink_probability_per_saccade},
      {"loss_probability_per_fixation", sg.loss_probability_per_fixation},
      {"drift_offset_sd_px", sg.drift_offset_sd_px},
      {"drift_slope_sd", sg.drift_slope_sd},
      {"drift_growth_px_per_trial", sg.drift_growth_px_per_trial},
      {"layout", {{"char_width_px", st.config.layout.char_width_px}, {"line_height_px", st.config.layout.line_height_px},
                  {"left_margin_px", st.config.layout.left_margin_px}, {"first_line_top_px", st.config.layout.first_line_top_px},
                  {"wrap_width_chars", st.config.layout.wrap_width_chars}}},
  };
  write_text(root / "simulation.json", about.dump(2) + "\n");
  const fs::path protocol = root / "gazemill.toml";
  if (opt.delimited) write_text(protocol, delimited_protocol(st));
  if (opt.bids) write_text(root / "gazemill-bids.toml", bids_protocol(st));
  return protocol.string();
}

}  // namespace gazemill::sim
