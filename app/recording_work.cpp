#include "app/recording_work.h"

#include <sys/stat.h>

#include <algorithm>
#include <cstdio>
#include <filesystem>

#include <spdlog/spdlog.h>

#include "app/sample_digest.h"
#include "app/table_trials.h"
#include "detectors/fixation_import.h"
#include "detectors/recording_detection.h"
#include "io/bids_reader.h"
#include "io/delimited_reader.h"
#include "io/fixation_list_reader.h"
#include "io/sha256.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

// The sampling rates of eye trackers, generously: webcams to the fastest
// research systems (common practice, no source).
constexpr double kLeastRateHz = 10.0;
constexpr double kMostRateHz = 10000.0;

std::string format_number(double v) {
  char text[32];
  std::snprintf(text, sizeof text, "%.6g", v);
  return text;
}

std::int64_t modified_ns(const std::string& path) {
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0) return 0;
  return static_cast<std::int64_t>(st.st_mtim.tv_sec) * 1000000000 + st.st_mtim.tv_nsec;
}

// Which sidecar gave which key, by the BIDS Inheritance Principle (-v shows it).
void log_bids_sidecars(const BidsRecordingFiles& b) {
  if (!spdlog::should_log(spdlog::level::debug)) return;
  auto show = [&](const std::string& data, const char* what, const MergedSidecar& m) {
    if (m.empty()) return;
    spdlog::debug("{}: {} metadata from {} file(s)", data, what, m.files.size());
    for (const auto& line : m.describe()) spdlog::debug("  {}", line);
  };
  for (const auto& eye : b.eyes) {
    show(eye.physio_tsv, "physio", eye.physio_sidecar);
    show(eye.events_tsv, "physio events", eye.events_sidecar);
  }
  show(b.key + "_events", "task events", b.task_events_sidecar);
  if (!b.task_events_tsv.empty()) spdlog::debug("{}: task events table {}", b.key, b.task_events_tsv);
}

// Counts forwarded to the progress callback as increments.
std::function<void(std::uint64_t, std::uint64_t)> progress_of(const RecordingWorkOptions& o) {
  if (!o.progress) return {};
  auto last = std::make_shared<std::uint64_t>(0);
  return [last, &o](std::uint64_t done, std::uint64_t) {
    if (done > *last) o.progress(done - *last);
    *last = std::max(*last, done);
  };
}

}  // namespace

InputFileRecord describe_input(const std::string& path, const std::string& recording, const std::vector<InputFileRecord>& known) {
  InputFileRecord r;
  r.path = path;
  std::error_code ec;
  r.size_bytes = fs::file_size(path, ec);
  if (ec) throw InputError({path, 0, ""}, "cannot read the file's size: " + ec.message());
  r.modified_ns = modified_ns(path);
  r.recording_id = recording;
  for (const auto& k : known) {
    if (k.path == path && k.size_bytes == r.size_bytes && k.modified_ns == r.modified_ns && k.modified_ns != 0 && !k.sha256.empty()) {
      r.sha256 = k.sha256;
      return r;
    }
  }
  r.sha256 = sha256_file(path);
  return r;
}

RecordingOutput ingest_recording(const RecordingInputs& in, const Protocol& protocol, const std::vector<InputFileRecord>& known,
                                 const RecordingWorkOptions& options) {
  RecordingOutput out;
  Recording& rec = out.recording;
  rec.id = in.id;
  rec.participant = in.participant;
  rec.session = in.session;
  rec.source_file = in.sample_file;
  for (const auto& f : in.files) out.inputs.push_back(describe_input(f, in.id, known));

  const bool bids_input = protocol.input.format == InputFormat::bids;
  const bool fixation_input = protocol.input.format == InputFormat::fixations;
  bool left = false, right = false;
  FixationListRead list;
  if (bids_input) {
    for (const auto& eye : in.bids->eyes) (eye.sidecar.recorded_eye == Eye::left ? left : right) = true;
  } else if (fixation_input) {
    // No samples: the recording's eyes are those its fixations are from.
    list = read_fixation_list(in.sample_file, protocol.input.fixations);
    for (const auto& f : list.fixations) (f.eye == Eye::left ? left : right) = true;
    if (options.progress) options.progress(out.inputs.front().size_bytes);
  } else {
    left = protocol.input.table.left.has_value();
    right = protocol.input.table.right.has_value();
  }
  out.samples = std::make_shared<CompressedSamples>(left, right, options.chunk_rows, options.deflate_level, options.raw_budget_bytes);
  DelimitedReadResult result;
  if (bids_input) {
    const BidsRecordingFiles& b = *in.bids;
    log_bids_sidecars(b);
    BidsReadOptions bopt;
    bopt.missing_values = protocol.input.table.missing_values;
    bopt.duplicates = protocol.input.repairs.duplicate_timestamps;
    bopt.names = protocol.input.bids;
    result = read_bids_recording(b, bopt, *out.samples, &out.tracker_events);
    out.keeps_tracker_events = protocol.input.bids.keeps_tracker_events();
    rec.sample_rate_hz = b.eyes.front().sidecar.sampling_frequency_hz;
    // [screen] in the protocol replaces what the task events sidecar says.
    if (protocol.screen) rec.screen = *protocol.screen;
    else if (b.screen) rec.screen = *b.screen;
    else if (b.screen_error) throw *b.screen_error;
    else throw InputError({in.sample_file, 0, "StimulusPresentation"}, "no screen geometry: neither a task *_events.json with StimulusPresentation nor [screen] in the protocol");
  } else if (fixation_input) {
    result.messages = std::move(list.messages);
    result.message_lines = std::move(list.message_lines);
    result.first_time_us = list.first_us;
    result.last_time_us = list.last_us;
    rec.screen = *protocol.screen;
  } else {
    DelimitedReadOptions opt;
    opt.layout = protocol.input.table;
    opt.duplicate_timestamps = protocol.input.repairs.duplicate_timestamps;
    opt.chunk_rows = options.chunk_rows;
    opt.progress = progress_of(options);
    result = read_delimited(in.sample_file, opt, *out.samples);
    rec.screen = *protocol.screen;
  }
  out.samples->finish();
  if (!in.message_file.empty()) {
    DelimitedReadOptions mopt;
    mopt.layout.delimiter = protocol.input.message_file->delimiter;
    mopt.layout.time_column = protocol.input.message_file->time_column;
    mopt.layout.time_unit = fixation_input ? protocol.input.fixations.time_unit : protocol.input.table.time_unit;
    mopt.layout.message_column = protocol.input.message_file->text_column;
    mopt.layout.missing_values = fixation_input ? protocol.input.fixations.missing_values : protocol.input.table.missing_values;
    mopt.layout_key = "input.messages";
    NullSink none;
    DelimitedReadResult m = read_delimited(in.message_file, mopt, none);
    result.messages = std::move(m.messages);
    result.message_lines = std::move(m.message_lines);
  }
  rec.samples.has_left = left;
  rec.samples.has_right = right;

  // Messages in time order (stable: same-time messages keep file order).
  std::vector<std::size_t> order(result.messages.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t a, std::size_t b) { return result.messages[a].time_us < result.messages[b].time_us; });
  std::vector<std::size_t> lines;
  for (std::size_t i : order) {
    rec.messages.push_back(std::move(result.messages[i]));
    lines.push_back(result.message_lines[i]);
  }
  std::string message_source = in.message_file.empty() ? in.sample_file : in.message_file;
  if (bids_input && !in.bids->eyes.front().events_tsv.empty()) message_source = in.bids->eyes.front().events_tsv;
  const bool from_messages = protocol.trials.source == TrialSource::messages;
  if (from_messages) {
    const TrialSegmenter segmenter(protocol.trials, protocol.input.repairs.unterminated_trials);
    rec.trials = segmenter.segment(rec.messages, lines, message_source, result.repairs);
  }
  if (from_messages && rec.trials.empty()) {
    throw InputError({message_source, 0, "trials.start"}, "no trial found: no message matches the start pattern \"" +
                                                              protocol.trials.start_pattern + "\"");
  }

  // Timestamps read in the wrong unit give a rate no tracker has (1 Hz from
  // microseconds read as milliseconds); they would pass unseen to every
  // duration downstream.
  if (result.median_interval_us > 0) {
    const double implied_hz = 1e6 / result.median_interval_us;
    if (implied_hz < kLeastRateHz || implied_hz > kMostRateHz) {
      const std::string unit = bids_input ? to_string(in.bids->eyes.front().sidecar.timestamp_unit) : to_string(protocol.input.table.time_unit);
      throw InputError({bids_input ? in.bids->eyes.front().physio_json : in.sample_file, 0, bids_input ? "timestamp.Units" : "input.table.time_unit"},
                       "the samples are a median " + format_number(result.median_interval_us / 1000.0) + " ms apart with times read in " +
                           unit + ", which is " + format_number(implied_hz) + " Hz; eye trackers sample at " +
                           format_number(kLeastRateHz) + " to " + format_number(kMostRateHz) + " Hz. Is " + unit +
                           " the unit of the time column?");
    }
  }
  if (!from_messages) {
    if (fixation_input ? list.fixations.empty() && rec.messages.empty() : result.samples == 0) {
      throw InputError({in.sample_file, 0, ""}, std::string("no ") + (fixation_input ? "fixations" : "samples") +
                                                    ": a trial table needs the recording's data to place its trials");
    }
    rec.trials = trials_from_table(in, protocol, {result.first_time_us, result.last_time_us}, rec.messages, message_source);
  }
  if (fixation_input) {
    // The list's fixations are the recording's events: the detect stage has nothing to do.
    FixationImport imported = import_fixations(rec.trials, list.fixations, rec.screen);
    out.events = std::move(imported.events);
    out.fixations_outside_trials = imported.outside_trials;
    out.other_eye_rows = list.other_eye_rows;
    out.labels = compress_column("sample_label", ColumnType::uint8, "", nullptr, 0, options.chunk_rows, options.deflate_level);
    out.detected = true;
  }
  if (protocol.input.sample_rate_hz > 0) rec.sample_rate_hz = protocol.input.sample_rate_hz;
  else if (rec.sample_rate_hz <= 0 && result.median_interval_us > 0) rec.sample_rate_hz = 1e6 / result.median_interval_us;

  out.summary.sample_count = result.samples;
  out.summary.missing_left = result.missing_left;
  out.summary.missing_right = result.missing_right;
  out.summary.first_time_us = result.first_time_us;
  out.summary.last_time_us = result.last_time_us;
  out.repairs = std::move(result.repairs);
  return out;
}

void detect_events(RecordingOutput& out, const EventDetector& detector, const DetectionSpec& spec, const RecordingWorkOptions& options) {
  const CompressedSamples& samples = *out.samples;
  const Recording& rec = out.recording;
  std::vector<std::uint8_t> codes(samples.size(), static_cast<std::uint8_t>(SampleLabel::other));
  DetectedEvents& ev = out.events;
  ev = DetectedEvents{};
  SampleDigest& digest = out.digest;
  digest = SampleDigest{};
  const DigestSettings digest_settings{spec.eye, kTimeCoursePoints};
  digest.max_points_per_trial = digest_settings.max_points_per_trial;
  digest.samples = samples.size();
  const std::size_t step = std::max<std::size_t>(options.chunk_rows, 1);
  for (std::size_t from = 0; from < samples.size(); from += step) {
    digest.missing_samples += samples_without_gaze(samples.slice(from, std::min<std::size_t>(samples.size(), from + step)));
  }
  for (const Trial& trial : rec.trials) {
    const auto [first, last] = samples.range(trial.start_us, trial.end_us);
    // One trial at a time: a long recording never needs all its samples decoded at once.
    Recording one;
    one.id = rec.id;
    one.screen = rec.screen;
    one.samples = samples.slice(first, last);
    one.trials = {trial};
    RecordingDetection d = detect_recording(one, detector, spec);
    for (std::size_t i = 0; i < d.labels.size(); ++i) codes[first + i] = static_cast<std::uint8_t>(d.labels[i]);
    TrialDetection td = d.events.trials.empty() ? TrialDetection{trial.id, rec.samples.has_left ? Eye::left : Eye::right, {}, 0, 0}
                                                : std::move(d.events.trials.front());
    td.samples = last - first;
    const SampleColumns& s = one.samples;
    for (std::size_t i = 0; i < s.size(); ++i) {
      const bool any = (s.has_left && s.left.valid[i]) || (s.has_right && s.right.valid[i]);
      td.missing_samples += !any;
      if (d.labels[i] != SampleLabel::loss) continue;
      if (i > 0 && d.labels[i - 1] == SampleLabel::loss) ev.losses.back().end_us = s.time_us[i];
      else ev.losses.push_back({trial.id, s.time_us[i], s.time_us[i]});
    }
    ev.trials.push_back(std::move(td));
    digest_trial(digest, s, 0, s.size(), trial, rec.screen, rec.sample_rate_hz, &d.events.fixations, digest_settings);
    auto move_all = [](auto& to, auto& from) { to.insert(to.end(), std::make_move_iterator(from.begin()), std::make_move_iterator(from.end())); };
    move_all(ev.fixations, d.events.fixations);
    move_all(ev.saccades, d.events.saccades);
    move_all(ev.blinks, d.events.blinks);
  }
  out.labels = compress_column("sample_label", ColumnType::uint8, "", codes.data(), codes.size(), options.chunk_rows,
                               options.deflate_level);
  out.detected = true;
}

}  // namespace gazemill
