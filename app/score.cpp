#include "app/score.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <glob.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <optional>
#include <set>
#include <string_view>

#include "app/line_score.h"
#include "app/stage_settings.h"
#include "io/atomic_file.h"
#include "app/study_run.h"
#include "app/protocol_parser.h"
#include "app/temp_folder.h"
#include "app/text_table.h"
#include "app/toml_section.h"
#include "detectors/detector_registry.h"
#include "detectors/recording_detection.h"
#include "io/delimited_reader.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

std::optional<SampleLabel> label_named(const std::string& s) {
  for (SampleLabel l : {SampleLabel::fixation, SampleLabel::saccade, SampleLabel::pso, SampleLabel::blink, SampleLabel::loss,
                        SampleLabel::other, SampleLabel::pursuit}) {
    if (s == to_string(l)) return l;
  }
  return std::nullopt;
}

// Reads a truth labels file (time_us, label) into a map from time to label.
std::map<Microseconds, SampleLabel> read_truth_labels(const std::string& path) {
  DelimitedReadOptions opt;
  opt.layout.time_column = "time_us";
  opt.layout.time_unit = TimeUnit::microseconds;
  opt.layout.message_column = "label";
  opt.layout.missing_values = {""};
  opt.layout_key = "truth";
  NullSink none;
  const auto r = read_delimited(path, opt, none);
  std::map<Microseconds, SampleLabel> out;
  for (std::size_t i = 0; i < r.messages.size(); ++i) {
    auto l = label_named(r.messages[i].text);
    if (!l) throw InputError({path, r.message_lines[i], "label"}, "expected fixation, saccade, pso, blink, loss or other");
    out[r.messages[i].time_us] = *l;
  }
  return out;
}

}  // namespace

std::map<std::string, SampleLabel> parse_label_codes(const std::string& text) {
  std::map<std::string, SampleLabel> out;
  std::size_t start = 0;
  while (start < text.size()) {
    const auto comma = text.find(',', start);
    const std::string item = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    const auto eq = item.find('=');
    const auto label = eq == std::string::npos ? std::nullopt : label_named(item.substr(eq + 1));
    if (!label || eq == 0) {
      throw InputError({"", 0, "--codes"}, "expected CODE=CLASS pairs separated by commas, with CLASS one of fixation, "
                                           "saccade, pso, blink, loss, other; found \"" + item + "\"");
    }
    out[item.substr(0, eq)] = *label;
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  if (out.empty()) throw InputError({"", 0, "--codes"}, "no label codes given");
  return out;
}

std::map<std::string, SampleLabel> read_label_codes_file(const std::string& path) {
  toml::table root;
  try {
    root = toml::parse_file(path);
  } catch (const toml::parse_error& e) {
    throw InputError({path, e.source().begin.line, ""}, std::string("not valid TOML: ") + std::string(e.description()));
  }
  TomlSection top(root, "", path);
  auto codes = top.table("codes");
  if (!codes) throw InputError({path, 0, "codes"}, "expected a [codes] table, e.g. \"1\" = \"fixation\"");
  std::map<std::string, SampleLabel> out;
  for (const auto& key : codes->keys()) {
    const auto value = codes->string(key);
    const auto label = label_named(*value);
    if (!label) codes->fail(key, "expected fixation, saccade, pso, blink, loss or other, found \"" + *value + "\"");
    out[key] = *label;
  }
  top.finish();
  if (out.empty()) throw InputError({path, 0, "codes"}, "no label codes given");
  return out;
}

AgreementReport score_simulated_study(const std::string& folder, const DetectionSpec& detection) {
  const auto detector = make_detector(detection);
  Protocol protocol = parse_protocol_file((fs::path(folder) / "gazemill.toml").string());
  const TempFolder tmp("gazemill-score-");
  const std::string store_path = (tmp.path() / "scored.gzm.h5").string();
  StudyRunOptions ingest;
  ingest.store_path = store_path;
  ingest.only = Stage::ingest;
  run_study(protocol, ingest);
  StudyStoreReader store(store_path);
  AgreementScorer scorer;
  for (const auto& id : store.recording_ids()) {
    const Recording rec = store.read_recording(id, true);
    const std::string truth_path = (fs::path(folder) / "truth" / (rec.participant + "_labels.tsv.gz")).string();
    const auto truth = read_truth_labels(truth_path);
    std::vector<SampleLabel> reference;
    reference.reserve(rec.samples.size());
    for (auto t : rec.samples.time_us) {
      auto it = truth.find(t);
      if (it == truth.end()) throw InputError({truth_path, 0, "time_us"}, "no label for the sample at " + std::to_string(t) + " us");
      reference.push_back(it->second);
    }
    const RecordingDetection d = detect_recording(rec, *detector, detection);
    scorer.add(reference, d.labels, rec.samples.time_us);
  }
  return scorer.report();
}

std::vector<std::string> expand_labelled_files(const std::vector<std::string>& patterns) {
  std::set<std::string> found;
  for (const auto& pattern : patterns) {
    glob_t g{};
    const int rc = ::glob(pattern.c_str(), 0, nullptr, &g);
    if (rc == 0) {
      for (std::size_t i = 0; i < g.gl_pathc; ++i) found.insert(fs::path(g.gl_pathv[i]).lexically_normal().string());
    }
    globfree(&g);
    if (rc == GLOB_NOMATCH) throw InputError({"", 0, "--labelled"}, "\"" + pattern + "\" matches no file");
    if (rc != 0) throw InputError({"", 0, "--labelled"}, "cannot expand the pattern \"" + pattern + "\"");
  }
  return {found.begin(), found.end()};
}

namespace {

// One labelled file read, detected and scored, its scorer kept for pooling.
struct ScoredFile {
  AgreementScorer scorer;
  std::map<std::string, std::uint64_t> unmapped_codes;
};

ScoredFile score_one(const LabelledFileSpec& f, const EventDetector& detector, const DetectionSpec& detection) {
  DelimitedReadOptions opt;
  opt.layout.delimiter = f.delimiter;
  opt.layout.comment_prefix = f.comment_prefix;
  opt.layout.time_column = f.time_column;
  opt.layout.time_unit = f.time_unit;
  opt.layout.left = EyeColumnNames{f.x_column, f.y_column, ""};
  opt.layout.message_column = f.label_column;  // the label of each row travels as its message
  opt.layout.missing_values = f.missing_values;
  opt.layout.zero_gaze_is_missing = f.zero_gaze_is_missing;
  opt.layout_key = "score";
  opt.gazeless_message_rows_are_samples = true;
  CollectingSink sink;
  const auto r = read_delimited(f.path, opt, sink);
  if (sink.samples.size() == 0) throw InputError({f.path, 0, f.time_column}, "no samples in the file");
  // Times read in the wrong unit give a rate no tracker has (ms read as us: 1000 times too fast).
  if (r.median_interval_us > 0 && f.sample_rate_hz <= 0) {
    const double hz = 1e6 / r.median_interval_us;
    if (hz < kLeastTrackerRateHz || hz > kMostTrackerRateHz) {
      throw InputError({f.path, 0, f.time_column}, "the samples are a median " + fmt::format("{:g}", r.median_interval_us / 1000.0) +
                                                       " ms apart with times read in " + to_string(f.time_unit) + ", which is " +
                                                       fmt::format("{:g}", hz) + " Hz; is " + to_string(f.time_unit) +
                                                       " the unit of the time column (--time-unit)?");
    }
  }
  Recording rec;
  rec.id = "labelled";
  rec.screen = f.screen;
  rec.samples = std::move(sink.samples);
  rec.sample_rate_hz = f.sample_rate_hz > 0 ? f.sample_rate_hz : 1e6 / r.median_interval_us;
  // Without gaze the label column says what the reference saw: a blink or
  // loss row has no gaze here. A label text with no class is "other", counted.
  ScoredFile out;
  std::vector<SampleLabel> reference(rec.samples.size(), SampleLabel::other);
  std::size_t m = 0;
  for (std::size_t i = 0; i < rec.samples.size(); ++i) {
    while (m < r.messages.size() && r.messages[m].time_us < rec.samples.time_us[i]) ++m;
    if (m < r.messages.size() && r.messages[m].time_us == rec.samples.time_us[i]) {
      const auto it = f.codes.find(r.messages[m].text);
      if (it != f.codes.end()) reference[i] = it->second;
      else ++out.unmapped_codes[r.messages[m].text];
    }
  }
  if (std::all_of(reference.begin(), reference.end(), [](SampleLabel l) { return l == SampleLabel::other; }) && !out.unmapped_codes.empty()) {
    std::string found;
    std::size_t shown = 0;
    for (const auto& [code, n] : out.unmapped_codes) {
      if (shown++ == 8) break;
      found += (found.empty() ? "\"" : ", \"") + code + "\"";
    }
    throw InputError({f.path, 0, f.label_column}, "none of its labels is one of the codes given (--codes); it has " + found);
  }
  Trial whole;
  whole.id = "1";
  whole.start_us = rec.samples.time_us.front();
  whole.end_us = rec.samples.time_us.back();
  rec.trials.push_back(whole);
  const RecordingDetection d = detect_recording(rec, detector, detection);
  out.scorer.add(reference, d.labels, rec.samples.time_us);
  return out;
}

}  // namespace

LabelledFileScore score_labelled(const LabelledFileSpec& f, const DetectionSpec& detection) {
  const auto detector = make_detector(detection);
  ScoredFile s = score_one(f, *detector, detection);
  return {f.path, s.scorer.report(), std::move(s.unmapped_codes)};
}

AgreementReport score_labelled_file(const LabelledFileSpec& f, const DetectionSpec& detection) {
  return score_labelled(f, detection).report;
}

LabelledCorpusScore score_labelled_corpus(const std::vector<std::string>& paths, const LabelledFileSpec& settings,
                                          const DetectionSpec& detection) {
  const auto detector = make_detector(detection);
  LabelledCorpusScore corpus;
  AgreementScorer pooled;
  for (const auto& path : paths) {
    LabelledFileSpec f = settings;
    f.path = path;
    ScoredFile s = score_one(f, *detector, detection);
    pooled.merge(s.scorer);
    for (const auto& [code, n] : s.unmapped_codes) corpus.unmapped_codes[code] += n;
    corpus.files.push_back({path, s.scorer.report(), std::move(s.unmapped_codes)});
  }
  corpus.pooled = pooled.report();
  return corpus;
}

namespace {

std::string fixed(double v, const char* format) { return std::isnan(v) ? std::string("-") : fmt::format(fmt::runtime(format), v); }

}  // namespace

void print_agreement(const AgreementReport& r, std::ostream& out) {
  TextTable t({"class", "kappa", "ref_samples", "det_samples", "ref_events", "det_events", "matched", "precision", "recall", "f1",
               "onset_ms", "|onset|_ms", "offset_ms", "|offset|_ms", "ref_mean_ms", "det_mean_ms", "duration_diff_ms"},
              {false, true, true, true, true, true, true, true, true, true, true, true, true, true, true, true, true});
  for (const auto& c : r.classes) {
    t.add_row({to_string(c.label), fixed(c.kappa, "{:.3f}"), std::to_string(c.reference_samples), std::to_string(c.detected_samples),
               std::to_string(c.reference_events), std::to_string(c.detected_events), std::to_string(c.matched_events),
               fixed(c.precision, "{:.3f}"), fixed(c.recall, "{:.3f}"), fixed(c.f1, "{:.3f}"),
               fixed(c.mean_onset_difference_ms, "{:+.1f}"), fixed(c.mean_abs_onset_difference_ms, "{:.1f}"),
               fixed(c.mean_offset_difference_ms, "{:+.1f}"), fixed(c.mean_abs_offset_difference_ms, "{:.1f}"),
               fixed(c.reference_mean_duration_ms, "{:.1f}"), fixed(c.detected_mean_duration_ms, "{:.1f}"),
               fixed(c.mean_duration_difference_ms, "{:+.1f}")});
  }
  t.print(out);
  out << "\nconfusion (rows: reference, columns: detected), " << r.samples << " samples\n";
  std::vector<std::string> head{"reference"};
  for (std::size_t c = 0; c < kLabelCount; ++c) head.push_back(to_string(static_cast<SampleLabel>(c)));
  TextTable m(head, std::vector<bool>(head.size(), true));
  for (std::size_t a = 0; a < kLabelCount; ++a) {
    std::vector<std::string> row{to_string(static_cast<SampleLabel>(a))};
    for (std::size_t b = 0; b < kLabelCount; ++b) row.push_back(std::to_string(r.confusion[a][b]));
    m.add_row(row);
  }
  m.print(out);
}

void print_corpus(const LabelledCorpusScore& corpus, std::ostream& out) {
  TextTable t({"file", "samples", "kappa_fix", "kappa_sac", "kappa_pso", "f1_fix", "f1_sac", "f1_pso", "fix_duration_diff_ms"},
              {false, true, true, true, true, true, true, true, true});
  for (const auto& f : corpus.files) {
    const AgreementReport& r = f.report;
    t.add_row({f.path, std::to_string(r.samples), fixed(r.of(SampleLabel::fixation).kappa, "{:.3f}"),
               fixed(r.of(SampleLabel::saccade).kappa, "{:.3f}"), fixed(r.of(SampleLabel::pso).kappa, "{:.3f}"),
               fixed(r.of(SampleLabel::fixation).f1, "{:.3f}"), fixed(r.of(SampleLabel::saccade).f1, "{:.3f}"),
               fixed(r.of(SampleLabel::pso).f1, "{:.3f}"), fixed(r.of(SampleLabel::fixation).mean_duration_difference_ms, "{:+.1f}")});
  }
  t.print(out);
  out << "\npooled over " << corpus.files.size() << (corpus.files.size() == 1 ? " file\n" : " files\n");
  print_agreement(corpus.pooled, out);
  if (!corpus.unmapped_codes.empty()) {
    out << "\nlabels with no class in the codes, counted as other:";
    for (const auto& [code, n] : corpus.unmapped_codes) out << " \"" << code << "\" (" << n << " samples)";
    out << "\n";
  }
}

namespace {

nlohmann::json number_or_null(double v) { return std::isnan(v) ? nlohmann::json(nullptr) : nlohmann::json(v); }

nlohmann::json report_json(const AgreementReport& r) {
  nlohmann::json j;
  j["samples"] = r.samples;
  j["classes"] = nlohmann::json::object();
  for (const auto& c : r.classes) {
    j["classes"][to_string(c.label)] = {{"kappa", number_or_null(c.kappa)},
                                        {"reference_samples", c.reference_samples},
                                        {"detected_samples", c.detected_samples},
                                        {"reference_events", c.reference_events},
                                        {"detected_events", c.detected_events},
                                        {"matched_events", c.matched_events},
                                        {"precision", number_or_null(c.precision)},
                                        {"recall", number_or_null(c.recall)},
                                        {"f1", number_or_null(c.f1)},
                                        {"mean_onset_difference_ms", number_or_null(c.mean_onset_difference_ms)},
                                        {"mean_abs_onset_difference_ms", number_or_null(c.mean_abs_onset_difference_ms)},
                                        {"mean_offset_difference_ms", number_or_null(c.mean_offset_difference_ms)},
                                        {"mean_abs_offset_difference_ms", number_or_null(c.mean_abs_offset_difference_ms)},
                                        {"reference_mean_duration_ms", number_or_null(c.reference_mean_duration_ms)},
                                        {"detected_mean_duration_ms", number_or_null(c.detected_mean_duration_ms)},
                                        {"mean_duration_difference_ms", number_or_null(c.mean_duration_difference_ms)},
                                        {"matched_duration_difference_ms", number_or_null(c.matched_duration_difference_ms)}};
  }
  for (std::size_t a = 0; a < kLabelCount; ++a) {
    for (std::size_t b = 0; b < kLabelCount; ++b) {
      j["confusion"][to_string(static_cast<SampleLabel>(a))][to_string(static_cast<SampleLabel>(b))] = r.confusion[a][b];
    }
  }
  return j;
}

}  // namespace

std::string agreement_json(const AgreementReport& pooled, const DetectionSpec& detection, const LabelledCorpusScore* corpus) {
  nlohmann::json j;
  j["detection"] = nlohmann::json::parse(detection_settings_json(detection));
  const char* pso[] = {"separate", "fixation", "saccade"};
  j["detection"]["pso"] = pso[static_cast<int>(detection.pso)];
  j["pooled"] = report_json(pooled);
  j["files"] = nlohmann::json::array();
  j["unmapped_codes"] = nlohmann::json::object();
  if (corpus) {
    for (const auto& f : corpus->files) {
      nlohmann::json one = report_json(f.report);
      one["path"] = f.path;
      one["unmapped_codes"] = f.unmapped_codes;
      j["files"].push_back(std::move(one));
    }
    j["unmapped_codes"] = corpus->unmapped_codes;
  }
  return j.dump(2);
}

namespace {

// Two positive finite numbers, the whole text read; `most` bounds each.
std::pair<double, double> parse_pair(const std::string& text, const std::string& option, double most) {
  const auto x = text.find('x');
  const auto read = [&](std::string_view part, double& v) {
    const auto r = std::from_chars(part.data(), part.data() + part.size(), v);
    return !part.empty() && r.ec == std::errc() && r.ptr == part.data() + part.size() && v > 0 && v <= most;
  };
  double w = 0, h = 0;
  if (x != std::string::npos && read(std::string_view(text).substr(0, x), w) && read(std::string_view(text).substr(x + 1), h)) {
    return {w, h};
  }
  throw InputError({"", 0, option}, "expected WIDTHxHEIGHT, two positive numbers up to " + std::to_string(static_cast<long>(most)) +
                                        ", e.g. 1920x1080; found \"" + text + "\"");
}

}  // namespace

// The tracker's own events kept at ingest ([input.bids.tracker_events])
// as the reference, gazemill's labels as detected: trial by trial, with
// the events of the eye detection used in that trial.
AgreementReport score_tracker_events(const std::string& store_path) {
  StudyStoreReader store(store_path);
  AgreementScorer scorer;
  std::size_t scored = 0;
  for (const auto& id : store.recording_ids()) {
    if (!store.has_tracker_events(id)) continue;
    if (!store.has_events(id)) {
      throw InputError({store_path, 0, ""}, "recording " + id + " has the tracker's own events but no detected ones; run gazemill detect first");
    }
    const Recording rec = store.read_recording(id, true);
    const std::vector<SampleLabel> detected = store.read_sample_labels(id);
    const std::vector<TrackerEvent> tracker = store.read_tracker_events(id);
    const DetectedEvents events = store.read_events(id);
    const auto& time = rec.samples.time_us;
    for (std::size_t t = 0; t < rec.trials.size(); ++t) {
      const Trial& trial = rec.trials[t];
      const Eye eye = t < events.trials.size() ? events.trials[t].eye : Eye::left;
      const auto first = static_cast<std::size_t>(std::lower_bound(time.begin(), time.end(), trial.start_us) - time.begin());
      const auto last = static_cast<std::size_t>(std::upper_bound(time.begin(), time.end(), trial.end_us) - time.begin());
      if (last <= first) continue;
      std::vector<SampleLabel> reference(last - first, SampleLabel::other);
      for (const auto& e : tracker) {
        if (e.eye != eye || e.end_us <= trial.start_us || e.start_us > trial.end_us) continue;
        auto a = std::lower_bound(time.begin() + static_cast<std::ptrdiff_t>(first), time.begin() + static_cast<std::ptrdiff_t>(last), e.start_us);
        for (; a != time.begin() + static_cast<std::ptrdiff_t>(last) && *a < e.end_us; ++a) {
          reference[static_cast<std::size_t>(a - time.begin()) - first] = e.kind;
        }
      }
      scorer.add(reference, std::vector<SampleLabel>(detected.begin() + static_cast<std::ptrdiff_t>(first), detected.begin() + static_cast<std::ptrdiff_t>(last)),
                 std::vector<Microseconds>(time.begin() + static_cast<std::ptrdiff_t>(first), time.begin() + static_cast<std::ptrdiff_t>(last)));
    }
    ++scored;
  }
  if (scored == 0) {
    throw InputError({store_path, 0, ""}, "no recording keeps the tracker's own events: map them in [input.bids.tracker_events] and ingest again");
  }
  return scorer.report();
}

int run_score(const ScoreOptions& so) {
  if (!so.store.empty()) {
    const AgreementReport report = score_tracker_events(so.store);
    std::cout << "reference: the tracker's own events; compared: gazemill's detection, trial by trial\n";
    print_agreement(report, std::cout);
    if (!so.json_out.empty()) write_file_atomically(so.json_out, report_json(report).dump(2) + "\n");
    return 0;
  }
  if (so.lines) {
    if (so.simulated_folder.empty()) throw InputError({"", 0, "--lines"}, "line scoring needs a simulated study: --simulated FOLDER");
    const auto scores = score_lines(so.simulated_folder, so.protocol, so.line_methods);
    print_line_scores(scores, std::cout);
    if (!so.json_out.empty()) write_file_atomically(so.json_out, line_scores_json(scores));
    return 0;
  }
  if (so.simulated_folder.empty() == so.labelled.empty()) {
    throw InputError({"", 0, "score"}, "give either --simulated FOLDER or --labelled FILE...");
  }
  DetectionSpec detection;
  std::optional<Protocol> protocol;
  if (!so.protocol.empty()) {
    protocol = parse_protocol_file(so.protocol);
    detection = protocol->detection;
  }
  if (!so.method.empty()) detection.method = so.method;
  for (const auto& p : so.params) {
    const auto eq = p.find('=');
    try {
      if (eq == std::string::npos) throw std::invalid_argument("no =");
      detection.parameters[p.substr(0, eq)] = std::stod(p.substr(eq + 1));
    } catch (const std::exception&) {
      throw InputError({"", 0, "--param"}, "expected NAME=VALUE with a number, found \"" + p + "\"");
    }
  }
  if (so.pursuit_dispersion_deg) detection.pursuit_dispersion_deg = *so.pursuit_dispersion_deg;
  if (so.pursuit_window_ms) detection.pursuit_window_ms = *so.pursuit_window_ms;
  if (!(detection.pursuit_dispersion_deg >= 0 && detection.pursuit_dispersion_deg <= 100) ||
      !(detection.pursuit_window_ms > 0 && detection.pursuit_window_ms <= 1000)) {
    throw InputError({"", 0, "--pursuit-dispersion-deg/--pursuit-window-ms"}, "expected 0..100 deg and above 0 up to 1000 ms");
  }
  if (!so.pso.empty()) {
    if (so.pso == "separate") detection.pso = PsoHandling::separate;
    else if (so.pso == "fixation") detection.pso = PsoHandling::fixation;
    else if (so.pso == "saccade") detection.pso = PsoHandling::saccade;
    else throw InputError({"", 0, "--pso"}, "expected separate, fixation or saccade, found \"" + so.pso + "\"");
  }
  try {
    make_detector(detection);
  } catch (const std::invalid_argument& e) {
    throw InputError({"", 0, "--method/--param"}, e.what());
  }
  std::string json;
  if (!so.simulated_folder.empty()) {
    const AgreementReport report = score_simulated_study(so.simulated_folder, detection);
    print_agreement(report, std::cout);
    json = agreement_json(report, detection);
  } else {
    LabelledFileSpec f;
    std::vector<std::string> cols;
    std::string c;
    for (char ch : so.columns + ",") {
      if (ch == ',') {
        cols.push_back(c);
        c.clear();
      } else {
        c += ch;
      }
    }
    if (cols.size() != 4) throw InputError({"", 0, "--columns"}, "expected four names: time,x,y,label");
    f.time_column = cols[0];
    f.x_column = cols[1];
    f.y_column = cols[2];
    f.label_column = cols[3];
    // Reading settings: the protocol's [input.table], then the flags.
    if (protocol && protocol->input.format == InputFormat::delimited) {
      const TableLayout& table = protocol->input.table;
      f.delimiter = table.delimiter;
      f.comment_prefix = table.comment_prefix;
      f.time_unit = table.time_unit;
      f.missing_values = table.missing_values;
      f.zero_gaze_is_missing = table.zero_gaze_is_missing;
    }
    if (!so.delimiter.empty()) {
      const auto delimiter = delimiter_named(so.delimiter);
      if (!delimiter) throw InputError({"", 0, "--delimiter"}, "expected tab, comma, semicolon, space or one character");
      f.delimiter = *delimiter;
    }
    if (!so.time_unit.empty()) {
      const auto tu = parse_time_unit(so.time_unit);
      if (!tu) throw InputError({"", 0, "--time-unit"}, "expected s, ms, us or ns");
      f.time_unit = *tu;
    }
    if (!so.missing_values.empty()) f.missing_values = so.missing_values;
    if (so.zero_gaze_is_missing) f.zero_gaze_is_missing = true;
    if (so.codes.empty() && so.codes_file.empty()) {
      throw InputError({"", 0, "--codes"}, "a labelled file needs its label codes, e.g. --codes 1=fixation,2=saccade (or --codes-file)");
    }
    f.codes = so.codes_file.empty() ? parse_label_codes(so.codes) : read_label_codes_file(so.codes_file);
    if (protocol && protocol->screen) f.screen = *protocol->screen;
    if (!so.screen_px.empty()) {
      const auto [w, h] = parse_pair(so.screen_px, "--screen-px", 100000);
      if (w != std::floor(w) || h != std::floor(h)) throw InputError({"", 0, "--screen-px"}, "expected whole pixels, e.g. 1920x1080");
      f.screen.width_px = static_cast<int>(w);
      f.screen.height_px = static_cast<int>(h);
    }
    if (!so.screen_mm.empty()) std::tie(f.screen.width_mm, f.screen.height_mm) = parse_pair(so.screen_mm, "--screen-mm", 100000);
    if (so.distance_mm != 0) {  // given
      if (!(so.distance_mm > 0) || !std::isfinite(so.distance_mm)) {
        throw InputError({"", 0, "--distance-mm"}, "expected a positive number of millimetres");
      }
      f.screen.viewing_distance_mm = so.distance_mm;
    }
    if (f.screen.width_px <= 0 || f.screen.width_mm <= 0 || f.screen.viewing_distance_mm <= 0) {
      throw InputError({"", 0, "--screen-px/--screen-mm/--distance-mm"},
                       "the screen geometry is needed to work in degrees: give it, or a --protocol with [screen]");
    }
    f.sample_rate_hz = so.rate_hz;
    const LabelledCorpusScore corpus = score_labelled_corpus(expand_labelled_files(so.labelled), f, detection);
    print_corpus(corpus, std::cout);
    json = agreement_json(corpus.pooled, detection, &corpus);
  }
  if (!so.json_out.empty()) {
    const std::string tmp = so.json_out + ".partial";
    {
      std::ofstream out(tmp);
      out << json << "\n";
      if (!out) throw InputError({so.json_out, 0, ""}, "cannot write");
    }
    fs::rename(tmp, so.json_out);
  }
  return 0;
}

void register_score_command(CLI::App& app, ScoreOptions& so) {
  auto* score = app.add_subcommand("score", "Compare a detector's labels with a reference labelling");
  auto* sim_opt = score->add_option("--simulated", so.simulated_folder, "Folder written by gazemill simulate (uses its truth/)");
  auto* lab_opt = score->add_option("--labelled", so.labelled,
                                    "Delimited files with time, x, y and a label column (paths or quoted glob patterns); "
                                    "scored per file and pooled");
  sim_opt->excludes(lab_opt);
  auto* store_opt = score->add_option("--store", so.store,
                                      "A study store whose recordings keep the tracker's own events (BIDS physio events, "
                                      "[input.bids.tracker_events]): compare them with gazemill's detection");
  store_opt->excludes(sim_opt);
  store_opt->excludes(lab_opt);
  score->add_option("--protocol", so.protocol,
                    "Take the detection settings, the [input.table] reading settings and the screen from this protocol");
  score->add_option("--method", so.method, "Detection method: ivt, idt, engbert_kliegl, nystrom_holmqvist");
  score->add_option("--param", so.params, "Method parameter NAME=VALUE (repeatable)");
  score->add_option("--pursuit-dispersion-deg", so.pursuit_dispersion_deg,
                    "Smooth pursuit apart from fixations (I-VDT's dispersion stage) at this dispersion; 0 = off (default: the protocol's, else 0)");
  score->add_option("--pursuit-window-ms", so.pursuit_window_ms, "The pursuit stage's temporal window (default: the protocol's, else 100)");
  score->add_option("--pso", so.pso, "Post-saccadic oscillation: separate, fixation or saccade (default: the protocol's, else separate)");
  auto* codes_opt = score->add_option("--codes", so.codes,
                                      "Label codes of the labelled files, e.g. 1=fixation,2=saccade,3=pso,4=blink; "
                                      "labels without a class count as other and are listed");
  score->add_option("--codes-file", so.codes_file, "The label codes in a TOML file: [codes] \"1\" = \"fixation\" ...")
      ->excludes(codes_opt)->check(CLI::ExistingFile);
  score->add_option("--columns", so.columns, "Time, x, y and label column names of the labelled files")->capture_default_str();
  score->add_option("--delimiter", so.delimiter, "tab, comma, semicolon, space or one character (default: the protocol's, else tab)");
  score->add_option("--time-unit", so.time_unit, "s, ms, us or ns (default: the protocol's, else ms)");
  score->add_option("--missing-value", so.missing_values,
                    "A field text that means no value (repeatable; default: the protocol's, else \"\", NaN, nan, NA, .)");
  score->add_flag("--zero-gaze-is-missing", so.zero_gaze_is_missing, "Read (0, 0) gaze as lost tracking (also from the protocol)");
  score->add_option("--screen-px", so.screen_px, "Screen size in pixels, WIDTHxHEIGHT");
  score->add_option("--screen-mm", so.screen_mm, "Screen size in millimetres, WIDTHxHEIGHT");
  score->add_option("--distance-mm", so.distance_mm, "Viewing distance in millimetres");
  score->add_option("--rate", so.rate_hz, "Sampling rate in Hz (default: from the timestamps)");
  score->add_option("--json", so.json_out, "Also write the results as JSON to this file");
  score->add_flag("--lines", so.lines, "Score drift correction instead: the share of fixations each method puts on their true line (--simulated)");
  score->add_option("--line-methods", so.line_methods, "With --lines: the methods to score (default: every one)")->delimiter(',');
}

}  // namespace gazemill
