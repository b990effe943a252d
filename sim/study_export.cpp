#include "sim/study_export.h"

#include <fmt/format.h>
#include <zlib.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <condition_variable>
#include <exception>
#include <filesystem>
#include <fstream>
#include <map>
#include <mutex>
#include <nlohmann/json.hpp>
#include <stdexcept>
#include <thread>

#include "pipeline/regions.h"

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
  void close() {
    const int rc = gzclose(f_);
    f_ = nullptr;
    if (rc != Z_OK) throw std::runtime_error("write failed: " + path_);
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

void put_value(fmt::memory_buffer& b, float v, const char* missing) {
  if (std::isnan(v)) {
    b.append(std::string_view(missing));
  } else {
    fmt::format_to(std::back_inserter(b), "{:.2f}", v);
  }
}

// Samples and messages of one recording in time order; `bids` drops the header
// and the message column and writes n/a for missing values (BIDS's token);
// our own export leaves the field empty.
void write_samples(const Recording& r, const fs::path& path, int level, bool bids, Eye only_eye, bool one_eye) {
  GzWriter out(path, level);
  fmt::memory_buffer b;
  const char* missing = bids ? "n/a" : "";
  const auto& s = r.samples;
  const bool two = s.has_left && s.has_right && !one_eye;
  if (!bids) {
    const std::string_view header = two ? "time_us\tleft_x\tleft_y\tleft_pupil\tright_x\tright_y\tright_pupil\tmessage\n"
                                        : "time_us\tgaze_x\tgaze_y\tpupil\tmessage\n";
    b.append(header.data(), header.data() + header.size());
  }
  std::size_t m = 0;
  const std::size_t cols = two ? 6 : 3;
  auto message_row = [&](const Message& msg) {
    fmt::format_to(std::back_inserter(b), "{}", msg.time_us);
    for (std::size_t c = 0; c < cols; ++c) b.push_back('\t');
    fmt::format_to(std::back_inserter(b), "\t{}\n", msg.text);
  };
  for (std::size_t i = 0; i < s.size(); ++i) {
    while (!bids && m < r.messages.size() && r.messages[m].time_us <= s.time_us[i]) message_row(r.messages[m++]);
    fmt::format_to(std::back_inserter(b), "{}", s.time_us[i]);
    for (Eye e : {Eye::left, Eye::right}) {
      if (one_eye ? e != only_eye : (e == Eye::left ? !s.has_left : !s.has_right)) continue;
      const EyeSamples& eye = s.eye(e);
      b.push_back('\t');
      put_value(b, eye.x_px[i], missing);
      b.push_back('\t');
      put_value(b, eye.y_px[i], missing);
      b.push_back('\t');
      put_value(b, eye.pupil[i], missing);
    }
    if (!bids) b.push_back('\t');
    b.push_back('\n');
    if (b.size() > (1 << 20)) {
      out.write(b);
      b.clear();
    }
  }
  for (; !bids && m < r.messages.size(); ++m) message_row(r.messages[m]);
  out.write(b);
  out.close();
}

// The protocol's patterns for the messages above, built from the design.
std::string trials_section(const StudyDesign& design) {
  std::string sentence = "^show (?<block>sentence) (?<item>\\S+)";
  std::string factors;
  for (const auto& f : design.factors) {
    sentence += " " + f.name + " (?<" + f.name + ">\\S+)";
    factors += (factors.empty() ? "\"" : ", \"") + f.name + "\"";
  }
  sentence += " list (?<list>\\d+)$";
  // The levels, so that a trial with another value is an error, not a cell of its own.
  std::string levels = design.factors.empty() ? "" : "\n[design.levels]\n";
  for (const auto& f : design.factors) {
    std::string list;
    for (const auto& l : f.levels) list += (list.empty() ? "\"" : ", \"") + l.name + "\"";
    levels += f.name + " = [" + list + "]\n";
  }
  return fmt::format(R"([trials]
start = '^begin trial (?<trial>\d+)$'
end = '^end trial (?<trial>\d+)$'
variables = [{}{}{}
]

[trials.markers]
text_shown = '^text shown$'
text_hidden = '^text hidden$'
boundary = '^boundary crossed$'

[design]
item = "item"
factors = [{}]
{})",
                     // A pattern only for a kind of trial the study has: one that finds nothing is an error.
                     design.items.empty() ? "" : "\n  '" + sentence + "',",
                     design.passages.empty() ? "" : "\n  '^show (?<block>passage) (?<item>\\S+) list (?<list>\\d+)$',",
                     design.question_share > 0 ? "\n  '^answer (?<answer_correct>[01])$'," : "", factors, levels);
}

std::string regions_section(const TextLayoutSpec& l) {
  return fmt::format(R"([regions]
items_file = "items.tsv"
char_width_px = {}
line_height_px = {}
left_margin_px = {}
first_line_top_px = {}
wrap_width_chars = {}
)",
                     l.char_width_px, l.line_height_px, l.left_margin_px, l.first_line_top_px, l.wrap_width_chars);
}

std::string delimited_protocol(const SimulationConfig& cfg) {
  const auto& sc = cfg.screen;
  const bool two = cfg.signal.binocular;
  std::string eyes = two ? "[input.table.left]\nx_column = \"left_x\"\ny_column = \"left_y\"\npupil_column = \"left_pupil\"\n\n"
                           "[input.table.right]\nx_column = \"right_x\"\ny_column = \"right_y\"\npupil_column = \"right_pupil\"\n"
                         : "[input.table.left]\nx_column = \"gaze_x\"\ny_column = \"gaze_y\"\npupil_column = \"pupil\"\n";
  return fmt::format(R"(# gazemill protocol for the simulated study "{0}" (written by gazemill simulate; invented data).
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

{7}
{8})",
                     cfg.design.name, eyes, sc.width_px, sc.height_px, sc.width_mm, sc.height_mm, sc.viewing_distance_mm,
                     trials_section(cfg.design), regions_section(cfg.layout));
}

std::string bids_protocol(const SimulationConfig& cfg) {
  return fmt::format(R"(# gazemill protocol for the BIDS copy of the simulated study "{0}".
[study]
name = "{0}-bids"

[input]
format = "bids"
files = ["bids/sub-*/beh/*_physio.tsv.gz"]

{1}
{2})",
                     cfg.design.name, trials_section(cfg.design), regions_section(cfg.layout));
}

void write_bids_dataset_files(const SimulationConfig& cfg, const fs::path& root) {
  using nlohmann::json;
  const auto& sc = cfg.screen;
  write_text(root / "dataset_description.json",
             json{{"Name", cfg.design.name + " (simulated by gazemill)"}, {"BIDSVersion", "1.11.0"}, {"DatasetType", "raw"}}.dump(2));
  const std::string task = "task-" + cfg.design.task;
  write_text(root / (task + "_events.json"),
             json{{"StimulusPresentation",
                   {{"ScreenDistance", sc.viewing_distance_mm / 1000.0},
                    {"ScreenOrigin", {"top", "left"}},
                    {"ScreenResolution", {sc.width_px, sc.height_px}},
                    {"ScreenSize", {sc.width_mm / 1000.0, sc.height_mm / 1000.0}},
                    {"ScreenRefreshRate", 60}}}}
                 .dump(2));
}

void write_bids_recording(const SimulationConfig& cfg, const Recording& r, const fs::path& root, int level) {
  using nlohmann::json;
  const std::string task = "task-" + cfg.design.task;
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
                 {"pupil_size", {{"Description", "pupil diameter"}, {"Units", "mm"}}}};
    write_text(dir / (base + "_physio.json"), side.dump(2));
    GzWriter ev(dir / (base + "_physioevents.tsv.gz"), level);
    fmt::memory_buffer b;
    for (const auto& m : r.messages) fmt::format_to(std::back_inserter(b), "{}\tn/a\tn/a\t{}\n", m.time_us, m.text);
    ev.write(b);
    ev.close();
    write_text(dir / (base + "_physioevents.json"),
               json{{"Columns", {"onset", "duration", "trial_type", "message"}},
                    {"OnsetSource", "timestamp"},
                    {"Description", "messages written by the experiment"}}
                   .dump(2));
  }
}

// A 0-based index as written: from 1, empty for none.
std::string from_one(int index) { return index < 0 ? std::string() : std::to_string(index + 1); }

std::string fmt_fixed(double v, int decimals) { return fmt::format("{:.{}f}", v, decimals); }

}  // namespace

struct StudyWriter::Tables {
  std::ofstream fixations, drift, trials, participants;
};

StudyWriter::StudyWriter(const SimulationConfig& config, const StudyMaterials& materials, std::string folder, ExportOptions options)
    : config_(config), materials_(materials), folder_(std::move(folder)), options_(options), tables_(std::make_unique<Tables>()) {
  const fs::path root(folder_);
  fs::create_directories(root / "truth");
  const StudyDesign& design = config_.design;
  const int tf = design.text_factor();
  const std::string text_factor = tf < 0 ? std::string() : design.factors[static_cast<std::size_t>(tf)].name;

  // Regions twice: as item text to lay out, and as boxes (one row per region and line).
  std::string items = "item" + (tf < 0 ? std::string() : "\t" + text_factor) + "\ttext\troles\n";
  std::string regions = "item" + (tf < 0 ? std::string() : "\t" + text_factor) +
                        "\tregion\tlabel\trole\tleft_px\ttop_px\tright_px\tbottom_px\tline\tletters\twords\n";
  auto add = [&](const Stimulus& s, std::size_t v) {
    const int target = s.target_region[v];
    std::map<int, std::string> roles;
    if (target >= 0) {
      roles[target] = "target";
      if (target + 1 < static_cast<int>(s.layout[v].regions.size())) roles[target + 1] = "spillover";
    }
    // Passages have no level of the text factor: the field stays empty, as the
    // trial's variable is absent.
    const std::string level = tf < 0 ? std::string() : s.passage ? "\t" : "\t" + design.factors[static_cast<std::size_t>(tf)].levels[v].name;
    std::string role_text;
    for (const auto& [r, name] : roles) role_text += (role_text.empty() ? "" : " ") + std::to_string(r + 1) + "=" + name;
    items += fmt::format("{}{}\t{}\t{}\n", s.id, level, s.marked_text[v], role_text);
    const RegionLayout layout = region_layout_from_text(s.layout[v], config_.layout, {}, roles);
    for (const auto& r : layout.regions) {
      for (const auto& b : r.boxes) {
        regions += fmt::format("{}{}\t{}\t{}\t{}\t{:.1f}\t{:.1f}\t{:.1f}\t{:.1f}\t{}\t{}\t{}\n", s.id, level, r.id + 1, r.label, r.role, b.left_px,
                               b.top_px, b.right_px, b.bottom_px, b.line + 1, r.letters, r.words);
      }
    }
  };
  for (const auto& s : materials_.sentences) {
    for (std::size_t v = 0; v < s.layout.size(); ++v) add(s, v);
  }
  for (const auto& s : materials_.passages) add(s, 0);
  write_text(root / "items.tsv", items);
  write_text(root / "regions.tsv", regions);

  const auto& sg = config_.signal;
  const auto& pd = config_.passage_distortion;
  nlohmann::json factors = nlohmann::json::array();
  for (const auto& f : design.factors) {
    nlohmann::json levels = nlohmann::json::array();
    for (const auto& l : f.levels) {
      levels.push_back({{"name", l.name},
                        {"target_fixation_ms", l.effect.fixation_ms},
                        {"target_first_fixation_ms", l.effect.first_fixation_ms},
                        {"spillover_ms", l.effect.spillover_ms},
                        {"target_skip_factor", l.effect.skip_factor},
                        {"target_refixation", l.effect.refixation}});
    }
    factors.push_back({{"name", f.name}, {"changes_text", f.changes_text}, {"levels", levels}});
  }
  nlohmann::json about = {
      {"generator", "gazemill simulate"},
      {"note", "Invented data from a simulated reader; not recordings of people."},
      {"seed", config_.seed},
      {"participants", design.participants},
      {"items", design.items.size()},
      {"passages", design.passages.size()},
      {"factors", factors},
      {"lists", design.lists()},
      {"question_share", design.question_share},
      {"answer_accuracy", {{"mean", design.accuracy_mean}, {"sd", design.accuracy_sd}, {"min", design.accuracy_min}, {"max", design.accuracy_max}}},
      {"sample_rate_hz", sg.sample_rate_hz},
      {"binocular", sg.binocular},
      {"noise_rms_s2s_deg", sg.noise_rms_s2s_deg},
      {"post_saccadic_oscillation", sg.post_saccadic_oscillation},
      {"blink_probability_per_saccade", sg.blink_probability_per_saccade},
      {"loss_probability_per_fixation", sg.loss_probability_per_fixation},
      {"pupil_mean_mm", sg.pupil_mean_mm},
      {"drift_offset_sd_px", sg.drift_offset_sd_px},
      {"drift_slope_sd", sg.drift_slope_sd},
      {"drift_growth_px_per_trial", sg.drift_growth_px_per_trial},
      {"passage_distortion_max",
       {{"noise_sd_lines", pd.noise_sd_lines},
        {"slope", pd.slope},
        {"shift", pd.shift},
        {"offset_lines", pd.offset_lines},
        {"within_line_regression", pd.within_line_regression},
        {"between_line_regression", pd.between_line_regression}}},
      {"layout", {{"char_width_px", config_.layout.char_width_px}, {"line_height_px", config_.layout.line_height_px},
                  {"left_margin_px", config_.layout.left_margin_px}, {"first_line_top_px", config_.layout.first_line_top_px},
                  {"wrap_width_chars", config_.layout.wrap_width_chars}}},
  };
  write_text(root / "simulation.json", about.dump(2) + "\n");
  summary_.protocol = (root / "gazemill.toml").string();
  if (options_.delimited) write_text(summary_.protocol, delimited_protocol(config_));
  if (options_.bids) {
    write_bids_dataset_files(config_, root / "bids");
    write_text(root / "gazemill-bids.toml", bids_protocol(config_));
  }

  auto open = [&](std::ofstream& f, const char* name, const std::string& header) {
    f.open(root / "truth" / name, std::ios::binary);
    if (!f) throw std::runtime_error("cannot write " + (root / "truth" / name).string());
    f << header;
  };
  open(tables_->fixations, "fixations.tsv", "participant\ttrial\tstart_us\tend_us\tx_px\ty_px\tline\tregion\tchar\tdrift_y_px\n");
  open(tables_->drift, "drift.tsv", "participant\ttrial\toffset_px\tslope\tshift\tnoise_sd_px\tsession_px\n");
  std::string trial_header = "participant\ttrial\tblock\titem\tlist";
  for (const auto& f : design.factors) trial_header += "\t" + f.name;
  trial_header += "\ttarget_region\tanswer_correct\tlines\twithin_line_regression\tbetween_line_regression\n";
  open(tables_->trials, "trials.tsv", trial_header);
  open(tables_->participants, "participants.tsv", "participant\tlist\tanswer_accuracy\tpupil_mean_mm\n");
}

StudyWriter::~StudyWriter() = default;

const Stimulus& StudyWriter::stimulus(const TrialTruth& t) const {
  return t.passage ? materials_.passages[t.stimulus] : materials_.sentences[t.stimulus];
}

StudyWriter::TruthRows StudyWriter::write_participant(const SimulatedRecording& sr) const {
  const fs::path root(folder_);
  const Recording& r = sr.recording;
  if (options_.delimited) write_samples(r, root / "raw" / (r.participant + "_s" + r.session + ".tsv.gz"), options_.gzip_level, false, Eye::left, false);
  if (options_.bids) write_bids_recording(config_, r, root / "bids", options_.gzip_level);
  {
    GzWriter labels(root / "truth" / (r.participant + "_labels.tsv.gz"), options_.gzip_level);
    fmt::memory_buffer b;
    fmt::format_to(std::back_inserter(b), "time_us\tlabel\n");
    for (std::size_t i = 0; i < sr.truth.labels.size(); ++i) {
      fmt::format_to(std::back_inserter(b), "{}\t{}\n", r.samples.time_us[i], to_string(sr.truth.labels[i]));
      if (b.size() > (1 << 20)) {
        labels.write(b);
        b.clear();
      }
    }
    labels.write(b);
    labels.close();
  }

  TruthRows rows;
  const std::string& p = r.participant;
  rows.samples = r.samples.size();
  rows.trial_count = r.trials.size();
  for (std::size_t i = 0; i < sr.truth.fixations.size(); ++i) {
    const auto& f = sr.truth.fixations[i];
    rows.text_fixations += f.line >= 0;
    rows.fixations += fmt::format("{}\t{}\t{}\t{}\t{:.2f}\t{:.2f}\t{}\t{}\t{}\t{:.2f}\n", p, f.trial, f.start_us, f.end_us, f.x_px, f.y_px,
                                  from_one(f.line), from_one(f.region), from_one(f.char_index), sr.fixation_drift_y_px[i]);
  }
  const StudyDesign& design = config_.design;
  for (std::size_t k = 0; k < sr.trials.size(); ++k) {
    const TrialTruth& t = sr.trials[k];
    const TrialDrift& d = sr.truth.drift[k];
    rows.drift += fmt::format("{}\t{}\t{:.3f}\t{:.5f}\t{:.5f}\t{:.3f}\t{:.3f}\n", p, d.trial, d.offset_px, d.slope, t.shift, t.noise_sd_px, d.session_px);
    const Stimulus& s = stimulus(t);
    std::string levels;
    for (std::size_t f = 0; f < design.factors.size(); ++f) levels += "\t" + (t.cell ? design.level_names(*t.cell)[f] : std::string());
    rows.trials += fmt::format("{}\t{}\t{}\t{}\t{}{}\t{}\t{}\t{}\t{}\t{}\n", p, t.trial, t.passage ? "passage" : "sentence", s.id, t.list + 1, levels,
                               from_one(s.target_region[t.variant]), t.answer_correct ? std::to_string(*t.answer_correct) : std::string(),
                               s.layout[t.variant].line_count, t.passage ? fmt_fixed(t.within_line_regression, 4) : std::string(),
                               t.passage ? fmt_fixed(t.between_line_regression, 4) : std::string());
  }
  rows.participant = fmt::format("{}\t{}\t{:.4f}\t{:.3f}\n", p, sr.list + 1, sr.answer_accuracy, sr.pupil_mean_mm);
  return rows;
}

void StudyWriter::add_truth(const TruthRows& rows) {
  tables_->fixations << rows.fixations;
  tables_->drift << rows.drift;
  tables_->trials << rows.trials;
  tables_->participants << rows.participant;
  ++summary_.participants;
  summary_.trials += rows.trial_count;
  summary_.samples += rows.samples;
  summary_.fixations += rows.text_fixations;
}

ExportSummary StudyWriter::finish() {
  for (std::ofstream* f : {&tables_->fixations, &tables_->drift, &tables_->trials, &tables_->participants}) {
    f->close();
    if (!*f) throw std::runtime_error("cannot write the truth tables under " + folder_);
  }
  return summary_;
}

ExportSummary simulate_to_folder(const SimulationConfig& config, const std::string& folder, const ExportOptions& options, unsigned threads) {
  const StudySimulator simulator(config);
  StudyWriter writer(simulator.config(), simulator.materials(), folder, options);
  const std::size_t n = simulator.participants();
  if (threads == 0) threads = std::max(1u, std::thread::hardware_concurrency());
  threads = static_cast<unsigned>(std::min<std::size_t>(threads, n));
  // Each worker simulates and writes one participant at a time; their truth
  // rows join the shared tables in participant order.
  std::mutex mutex;
  std::map<std::size_t, StudyWriter::TruthRows> pending;
  std::size_t next_to_add = 0;
  std::atomic<std::size_t> next{0};
  std::exception_ptr failure;
  auto work = [&] {
    try {
      for (std::size_t p = next++; p < n; p = next++) {
        StudyWriter::TruthRows rows;
        {
          const SimulatedRecording sr = simulator.participant(p);
          rows = writer.write_participant(sr);
        }
        std::lock_guard<std::mutex> lock(mutex);
        if (failure) return;
        pending.emplace(p, std::move(rows));
        for (auto it = pending.find(next_to_add); it != pending.end(); it = pending.find(next_to_add)) {
          writer.add_truth(it->second);
          pending.erase(it);
          ++next_to_add;
        }
      }
    } catch (...) {
      std::lock_guard<std::mutex> lock(mutex);
      if (!failure) failure = std::current_exception();
      next = n;  // the others stop after their current participant
    }
  };
  std::vector<std::thread> workers;
  for (unsigned i = 1; i < threads; ++i) workers.emplace_back(work);
  work();
  for (auto& w : workers) w.join();
  if (failure) std::rethrow_exception(failure);
  return writer.finish();
}

std::string export_study(const SimulatedStudy& st, const std::string& folder, const ExportOptions& options) {
  StudyWriter writer(st.config, st.materials, folder, options);
  for (const auto& sr : st.recordings) writer.add_truth(writer.write_participant(sr));
  return writer.finish().protocol;
}

}  // namespace gazemill::sim
