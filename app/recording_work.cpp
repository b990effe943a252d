#include "app/recording_work.h"

#include <sys/stat.h>

#include <algorithm>
#include <cmath>
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

// Fixations of reading last about 200-300 ms on average (Rayner 1998, from
// memory); a list whose median is outside these bounds was read in the wrong
// unit (a factor of 1000 lands far outside either way).
constexpr double kShortestMedianFixationMs = 10.0;
constexpr double kLongestMedianFixationMs = 10000.0;

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

// Whole digits, never an exponent: these times are compared with a file's text.
std::string milliseconds_text(Microseconds us) {
  if (us % 1000 == 0) return std::to_string(us / 1000) + " ms";
  char text[48];
  std::snprintf(text, sizeof text, "%.3f ms", static_cast<double>(us) / 1000.0);
  return text;
}

// A fixation list read in the wrong time unit: durations no reader's fixations have.
void check_fixation_list_clock(const std::vector<FixationEvent>& fixations, const Protocol& protocol, const RecordingInputs& in) {
  if (fixations.empty()) return;
  std::vector<double> ms;
  ms.reserve(fixations.size());
  for (const auto& f : fixations) ms.push_back(f.duration_ms());
  std::nth_element(ms.begin(), ms.begin() + static_cast<std::ptrdiff_t>(ms.size() / 2), ms.end());
  const double median = ms[ms.size() / 2];
  if (median >= kShortestMedianFixationMs && median <= kLongestMedianFixationMs) return;
  const std::string unit = to_string(protocol.input.fixations.time_unit);
  throw InputError({in.sample_file, 0, "input.fixations.time_unit"},
                   "its fixations last a median " + format_number(median) + " ms with times read in " + unit +
                       "; fixations in reading last about 200-300 ms. Is " + unit + " the unit of its time columns?");
}

// A trial without a sample between its start and end cannot be detected,
// cleaned or measured: unchecked, it gives zero fixations and no word. The
// usual cause is messages on another clock or in another unit than the
// samples (common practice, no source). An error naming the first such trial
// unless input.repairs.trials_without_samples = "drop", which leaves them out
// and counts them.
void drop_trials_without_samples(Recording& rec, const CompressedSamples& samples, DelimitedReadResult& result, const Protocol& protocol,
                                 const RecordingInputs& in, const std::string& message_source, const std::vector<std::size_t>& lines) {
  std::vector<Trial> kept;
  kept.reserve(rec.trials.size());
  for (Trial& trial : rec.trials) {
    const auto [first, last] = samples.range(trial.start_us, trial.end_us);
    if (last > first) {
      kept.push_back(std::move(trial));
      continue;
    }
    if (protocol.input.repairs.trials_without_samples == TrialsWithoutSamplesPolicy::drop) {
      ++result.repairs["trial_without_samples_dropped"];
      continue;
    }
    // The line of the trial's first message, when its messages are lines of a file.
    std::size_t line = 0;
    const bool from_messages = protocol.trials.source == TrialSource::messages;
    if (from_messages) {
      const auto it = std::lower_bound(rec.messages.begin(), rec.messages.end(), trial.start_us,
                                       [](const Message& m, Microseconds t) { return m.time_us < t; });
      const auto index = static_cast<std::size_t>(it - rec.messages.begin());
      if (index < lines.size()) line = lines[index];
    }
    std::string recording = samples.size() == 0
                                ? "the recording has no samples"
                                : "the samples of " + in.sample_file + " run from " + milliseconds_text(result.first_time_us) + " to " +
                                      milliseconds_text(result.last_time_us);
    std::string hint;
    if (in.message_file.empty()) {
      hint = "are the messages on the samples' clock?";
    } else {
      const TimeUnit unit = protocol.input.message_file->time_unit.value_or(protocol.input.table.time_unit);
      hint = "are the messages' times in " + to_string(unit) + "? If not, set input.messages.time_unit";
    }
    throw InputError({message_source, line, from_messages ? "trials.start" : "trials"},
                     "trial '" + trial.id + "' runs from " + milliseconds_text(trial.start_us) + " to " + milliseconds_text(trial.end_us) +
                         " and has no samples: " + recording + "; " + hint +
                         " (or set input.repairs.trials_without_samples = \"drop\" to leave such trials out, counted)");
  }
  rec.trials = std::move(kept);
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
  const bool check_margin = std::isfinite(protocol.input.offscreen_margin_px);
  const auto count_offscreen = [](const ScreenMarginSink& margin, DelimitedReadResult& r) {
    if (margin.offscreen_left + margin.offscreen_right == 0) return;
    r.repairs["offscreen_gaze_read_as_missing"] += margin.offscreen_left + margin.offscreen_right;
    r.missing_left += margin.offscreen_left;
    r.missing_right += margin.offscreen_right;
  };
  if (bids_input) {
    const BidsRecordingFiles& b = *in.bids;
    log_bids_sidecars(b);
    BidsReadOptions bopt;
    bopt.missing_values = protocol.input.table.missing_values;
    bopt.duplicates = protocol.input.repairs.duplicate_timestamps;
    bopt.names = protocol.input.bids;
    // [screen] in the protocol replaces what the task events sidecar says.
    if (protocol.screen) rec.screen = *protocol.screen;
    else if (b.screen) rec.screen = *b.screen;
    else if (b.screen_error) throw *b.screen_error;
    else throw InputError({in.sample_file, 0, "StimulusPresentation"}, "no screen geometry: neither a task *_events.json with StimulusPresentation nor [screen] in the protocol");
    // BIDS gaze is in screen pixels (the reader insists on it).
    ZeroGazeCountingSink zeros(*out.samples);
    ScreenMarginSink margin(zeros, rec.screen.width_px, rec.screen.height_px, protocol.input.offscreen_margin_px);
    result = read_bids_recording(b, bopt, check_margin ? static_cast<SampleSink&>(margin) : zeros, &out.tracker_events);
    count_offscreen(margin, result);
    out.zero_gaze_samples = zeros.zero_gaze;
    out.keeps_tracker_events = protocol.input.bids.keeps_tracker_events();
    rec.sample_rate_hz = b.eyes.front().sidecar.sampling_frequency_hz;
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
    rec.screen = *protocol.screen;
    ZeroGazeCountingSink zeros(*out.samples);
    ScreenMarginSink margin(zeros, rec.screen.width_px, rec.screen.height_px, protocol.input.offscreen_margin_px);
    result = read_delimited(in.sample_file, opt, check_margin ? static_cast<SampleSink&>(margin) : zeros);
    count_offscreen(margin, result);
    out.zero_gaze_samples = zeros.zero_gaze;
  }
  out.samples->finish();
  if (!in.message_file.empty()) {
    DelimitedReadOptions mopt;
    mopt.layout.delimiter = protocol.input.message_file->delimiter;
    mopt.layout.time_column = protocol.input.message_file->time_column;
    mopt.layout.time_unit = protocol.input.message_file->time_unit.value_or(fixation_input ? protocol.input.fixations.time_unit
                                                                                           : protocol.input.table.time_unit);
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
    rec.trials = segmenter.segment(rec.messages, lines, message_source, result.repairs, &out.pattern_use);
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
    if (implied_hz < kLeastTrackerRateHz || implied_hz > kMostTrackerRateHz) {
      const std::string unit = bids_input ? to_string(in.bids->eyes.front().sidecar.timestamp_unit) : to_string(protocol.input.table.time_unit);
      throw InputError({bids_input ? in.bids->eyes.front().physio_sidecar.file_of("timestamp") : in.sample_file, 0, bids_input ? "timestamp.Units" : "input.table.time_unit"},
                       "the samples are a median " + format_number(result.median_interval_us / 1000.0) + " ms apart with times read in " +
                           unit + ", which is " + format_number(implied_hz) + " Hz; eye trackers sample at " +
                           format_number(kLeastTrackerRateHz) + " to " + format_number(kMostTrackerRateHz) + " Hz. Is " + unit +
                           " the unit of the time column?");
    }
    // A stated rate the timestamps contradict (a protocol copied from another
    // study, a sidecar from another export): detection follows the timestamps,
    // the data-quality digest and the report the stated rate, so the two would
    // disagree without a word. A tenth either way allows for trackers whose
    // clock ticks unevenly (60 Hz on a millisecond clock is 16 or 17 ms).
    const bool in_protocol = protocol.input.sample_rate_hz > 0;
    const double stated_hz = in_protocol ? protocol.input.sample_rate_hz : bids_input ? rec.sample_rate_hz : 0.0;
    if (stated_hz > 0 && (implied_hz < 0.9 * stated_hz || implied_hz > 1.1 * stated_hz)) {
      throw InputError({in_protocol ? protocol.path : in.bids->eyes.front().physio_sidecar.file_of("SamplingFrequency"), in_protocol ? protocol.input.sample_rate_line : 0,
                        in_protocol ? "input.sample_rate_hz" : "SamplingFrequency"},
                       "states " + format_number(stated_hz) + " Hz, but the samples of " + in.sample_file + " are a median " +
                           format_number(result.median_interval_us / 1000.0) + " ms apart, which is " + format_number(implied_hz) +
                           " Hz; state the rate the file was recorded at" + (in_protocol ? ", or leave sample_rate_hz out to take it from the timestamps" : ""));
    }
  }
  if (!from_messages) {
    if (fixation_input ? list.fixations.empty() && rec.messages.empty() : result.samples == 0) {
      throw InputError({in.sample_file, 0, ""}, std::string("no ") + (fixation_input ? "fixations" : "samples") +
                                                    ": a trial table needs the recording's data to place its trials");
    }
    rec.trials = trials_from_table(in, protocol, {result.first_time_us, result.last_time_us}, rec.messages, message_source);
  }
  count_marker_use(rec.trials, protocol.trials.marker_patterns, out.pattern_use);
  if (!fixation_input) drop_trials_without_samples(rec, *out.samples, result, protocol, in, message_source, lines);
  if (fixation_input) {
    // The list's fixations are the recording's events: the detect stage has nothing to do.
    check_fixation_list_clock(list.fixations, protocol, in);
    FixationImport imported = import_fixations(rec.trials, list.fixations, rec.screen);
    if (!list.fixations.empty() && imported.outside_trials == list.fixations.size()) {
      const auto [first, last] = std::minmax_element(list.fixations.begin(), list.fixations.end(),
                                                     [](const FixationEvent& a, const FixationEvent& b) { return a.start_us < b.start_us; });
      throw InputError({in.sample_file, 0, "input.fixations"},
                       "none of its " + std::to_string(list.fixations.size()) + " fixations starts within a trial: they start from " +
                           milliseconds_text(first->start_us) + " to " + milliseconds_text(last->start_us) + ", the trials run from " +
                           milliseconds_text(rec.trials.front().start_us) + " to " + milliseconds_text(rec.trials.back().end_us) +
                           "; are the fixations and the messages on the same clock and in the units the protocol gives?");
    }
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
  const VisualAngle angle(rec.screen);
  const std::size_t step = std::max<std::size_t>(options.chunk_rows, 1);
  if (samples.rows_without_gaze() >= 0) {
    digest.missing_samples = static_cast<std::uint64_t>(samples.rows_without_gaze());
  } else {
    for (std::size_t from = 0; from < samples.size(); from += step) {
      digest.missing_samples += samples_without_gaze(samples.slice(from, std::min<std::size_t>(samples.size(), from + step)));
    }
  }
  for (const Trial& trial : rec.trials) {
    const auto [first, last] = samples.range(trial.start_us, trial.end_us);
    // One trial at a time: a long recording never needs all its samples decoded at once.
    Recording one;
    one.id = rec.id;
    one.screen = rec.screen;
    one.samples = samples.slice(first, last);
    one.trials = {trial};
    RecordingDetection d = detect_recording(one, detector, spec, angle);
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
    digest_trial(digest, s, 0, s.size(), trial, angle, rec.sample_rate_hz, &d.events.fixations, digest_settings);
    auto move_all = [](auto& to, auto& from) { to.insert(to.end(), std::make_move_iterator(from.begin()), std::make_move_iterator(from.end())); };
    move_all(ev.fixations, d.events.fixations);
    move_all(ev.saccades, d.events.saccades);
    move_all(ev.blinks, d.events.blinks);
  }
  // Held for the whole study's cleaning: without the growth's slack (a fifth to a half of them).
  ev.fixations.shrink_to_fit();
  ev.saccades.shrink_to_fit();
  ev.blinks.shrink_to_fit();
  ev.losses.shrink_to_fit();
  out.labels = compress_column("sample_label", ColumnType::uint8, "", codes.data(), codes.size(), options.chunk_rows,
                               options.deflate_level);
  out.detected = true;
}

}  // namespace gazemill
