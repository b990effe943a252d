#include "app/table_trials.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <nlohmann/json.hpp>
#include <optional>

#include "io/cell_table.h"
#include "pipeline/input_error.h"
#include "pipeline/named_regex.h"

namespace gazemill {
namespace {

std::string format_seconds(Microseconds us) {
  char text[48];
  std::snprintf(text, sizeof text, "%.6f s", static_cast<double>(us) / 1e6);
  return text;
}

std::string listing(const std::vector<std::string>& names) {
  std::string out;
  for (const auto& n : names) {
    if (!n.empty()) out += (out.empty() ? "" : ", ") + n;
  }
  return out.empty() ? "none" : out;
}

// How a row's start becomes a time on the recording's clock.
struct RowClock {
  std::string start_column;
  TimeUnit unit = TimeUnit::seconds;
  Microseconds origin_us = 0;  // added to the row's time
  std::string hint;            // why the origin is what it is, for errors
};

// The origin of BIDS task event onsets. The specification (v1.11.0,
// "Task events", the onset column): "Onset (in seconds) of the event,
// measured from the beginning of the acquisition of the first data point
// stored in the corresponding task data file". A physio file's StartTime
// ("Physiological recordings", SEEN in the v1.11.0 schema) places its own
// first sample on that same time line, in seconds (negative allowed): an
// onset o is (o - StartTime) seconds after the physio file's first sample.
// A task events sidecar that says "OnsetSource": "timestamp" (a key of
// physio events, which the published eyetracking_binocular example also
// puts in its task events sidecar, with onsets of some 1785 s) puts the
// onsets on the tracker's timestamp clock instead, still in seconds.
RowClock bids_onset_clock(const RecordingInputs& in, const SampleSpan& samples, const std::string& table) {
  const BidsRecordingFiles& b = *in.bids;
  RowClock c;
  c.start_column = "onset";
  c.unit = TimeUnit::seconds;
  const MergedSidecar& side = b.task_events_sidecar;
  const nlohmann::json j = nlohmann::json::parse(side.json);
  if (j.contains("OnsetSource")) {
    const nlohmann::json& v = j.at("OnsetSource");
    if (!v.is_string() || v.get<std::string>() != "timestamp") {
      throw InputError({side.file_of("OnsetSource"), 0, "OnsetSource"},
                       "in a task events sidecar gazemill reads only \"timestamp\" (onsets in seconds on the tracker's clock), found " +
                           v.dump() + "; without the key onsets count from the first sample (BIDS v1.11.0)");
    }
    c.origin_us = 0;
    c.hint = side.file_of("OnsetSource") + " says OnsetSource \"timestamp\": the onsets of " + table +
             " are read as seconds on the tracker's clock";
    return c;
  }
  const double start_time_s = b.eyes.front().sidecar.start_time_s;
  for (const auto& eye : b.eyes) {
    if (eye.sidecar.start_time_s != start_time_s) {
      throw InputError({eye.physio_sidecar.file_of("StartTime"), 0, "StartTime"},
                       "the eyes of one recording share their samples' clock, so their StartTime must agree; " +
                           b.eyes.front().physio_sidecar.file_of("StartTime") + " gives another");
    }
  }
  const double start_us = std::round(start_time_s * 1e6);
  if (!(std::fabs(start_us) < 1e17)) {
    throw InputError({b.eyes.front().physio_sidecar.file_of("StartTime"), 0, "StartTime"}, "expected a start time in seconds");
  }
  c.origin_us = samples.first_us - static_cast<Microseconds>(start_us);
  c.hint = "the onsets of " + table + " are read as seconds from the recording's first sample" +
           (start_time_s != 0 ? " minus its StartTime (" + b.eyes.front().physio_sidecar.file_of("StartTime") + ")" : std::string()) +
           " (BIDS v1.11.0); if they are on the tracker's clock, say \"OnsetSource\": \"timestamp\" in the task events sidecar";
  return c;
}

}  // namespace

std::set<std::string> trial_variables_needed(const Protocol& p) {
  std::set<std::string> out(p.design.factors.begin(), p.design.factors.end());
  if (p.regions.present()) out.insert(p.design.item_variable);
  for (const auto& rule : p.cleaning) {
    if (const auto v = rule.texts.find("variable"); v != rule.texts.end()) out.insert(v->second);
  }
  out.insert(p.trials.columns.begin(), p.trials.columns.end());
  return out;
}

namespace {

std::string trial_table_path(const RecordingInputs& in, const Protocol& p) {
  if (p.trials.source == TrialSource::table) return in.trial_table_file;
  const std::string path = in.bids ? in.bids->task_events_tsv : std::string();
  if (path.empty()) {
    throw InputError({in.sample_file, 0, "trials.from"},
                     "trials come from the task events, but no *_events.tsv applies to this recording (looked beside it and "
                     "in the folders above, up to the dataset root, as the BIDS Inheritance Principle says)");
  }
  return path;
}

char trial_table_delimiter(const Protocol& p) { return p.trials.source == TrialSource::events ? '\t' : p.trials.table_delimiter; }

// The columns of a trial table's times, after checking that every column
// the protocol names or relies on is in its header.
struct TrialColumns {
  std::string start, end, duration;
};

TrialColumns trial_columns(const CellTable& table, const Protocol& p) {
  const TrialSegmentationSpec& spec = p.trials;
  const bool events = spec.source == TrialSource::events;
  TrialColumns c;
  if (events) {
    c.start = "onset";
    c.duration = "duration";
  } else {
    c.start = spec.start_column;
    if (table.has(spec.end_column)) c.end = spec.end_column;
    else c.duration = spec.duration_column;
  }
  const auto header = [&](const std::string& column, const std::string& what) {
    throw InputError({table.path(), table.header_line(), column}, what + "; the columns are " + listing(table.columns()));
  };
  if (!table.has(c.start)) header(c.start, "the column with each trial's start is missing");
  if (!spec.until_next && c.end.empty() && !table.has(c.duration)) {
    header(c.duration, events ? std::string("the duration column is missing (or give span = \"next\")")
                              : "neither the end column \"" + spec.end_column + "\" nor the duration column is there " +
                                    "(or give span = \"next\")");
  }
  if (!spec.trial_column.empty() && !table.has(spec.trial_column)) header(spec.trial_column, "the column trials.trial_column names is missing");
  if (!spec.trial_type_pattern.empty() && !table.has("trial_type")) {
    header("trial_type", "trials.trial_type selects rows by the trial_type column, which is missing");
  }
  for (const auto& name : trial_variables_needed(p)) {
    if (!table.has(name)) {
      header(name, "the protocol needs the trial variable '" + name + "' ([design], [regions], a cleaning rule or [trials] columns), " +
                       "which is no column of this table");
    }
  }
  return c;
}

}  // namespace

void check_trial_table(const RecordingInputs& in, const Protocol& p) {
  const std::string path = trial_table_path(in, p);
  trial_columns(CellTable(path, trial_table_delimiter(p)), p);
}

std::vector<Trial> trials_from_table(const RecordingInputs& in, const Protocol& p, const SampleSpan& samples,
                                     const std::vector<Message>& messages, std::string& source_file) {
  const TrialSegmentationSpec& spec = p.trials;
  const bool events = spec.source == TrialSource::events;
  const std::string path = trial_table_path(in, p);
  source_file = path;
  const CellTable table(path, trial_table_delimiter(p));
  const std::vector<std::string> absent = events ? std::vector<std::string>{}
                                          : p.input.format == InputFormat::fixations ? p.input.fixations.missing_values
                                                                                     : p.input.table.missing_values;
  auto fail = [&](std::size_t row, const std::string& column, const std::string& what) -> void {
    throw InputError({path, table.line_of(row), column}, what);
  };
  const TrialColumns columns = trial_columns(table, p);
  const std::string& end_column = columns.end;
  const std::string& duration_column = columns.duration;

  RowClock clock;
  if (events) {
    clock = bids_onset_clock(in, samples, path);
  } else {
    clock.start_column = spec.start_column;
    clock.unit = spec.table_time_unit;
    clock.origin_us = spec.table_times_from_first_sample ? samples.first_us : 0;
    clock.hint = spec.table_times_from_first_sample
                     ? "its times are read in " + to_string(spec.table_time_unit) + " from the recording's first sample (time_origin)"
                     : "its times are read in " + to_string(spec.table_time_unit) + " on the recording's clock (time_unit, time_origin)";
  }
  std::optional<NamedRegex> selector;
  if (!spec.trial_type_pattern.empty()) selector.emplace(spec.trial_type_pattern);
  std::string trial_column = spec.trial_column;

  // The rows that are trials, with their starts.
  std::vector<std::size_t> rows;
  std::vector<Microseconds> starts;
  for (std::size_t r = 0; r < table.rows(); ++r) {
    if (selector) {
      if (table.missing(r, "trial_type")) continue;
      bool hit = false;
      try {
        hit = selector->search(table.text(r, "trial_type")).has_value();
      } catch (const std::length_error& e) {
        fail(r, "trial_type", e.what());
      }
      if (!hit) continue;
    }
    if (table.missing(r, clock.start_column, absent)) fail(r, clock.start_column, "a trial needs its start; found none");
    rows.push_back(r);
    starts.push_back(clock.origin_us + table.time(r, clock.start_column, clock.unit));
  }
  if (rows.empty()) {
    throw InputError({path, 0, selector ? "trial_type" : ""},
                     table.rows() == 0 ? "no trial: the table has no rows"
                                       : "no trial: no row's trial_type matches trials.trial_type '" + spec.trial_type_pattern + "'");
  }

  // A column named "trial" is the trials' ids when trial_column names none
  // and every trial has a value of its own there; else the trials are
  // numbered and the column is the variable "trial_in_table". Either way no
  // second "trial" column reaches the tables (found in a newcomer's trial).
  std::string trial_variable = "trial";
  if (trial_column.empty() && table.has("trial")) {
    std::set<std::string> seen;
    const bool ids_there = std::all_of(rows.begin(), rows.end(), [&](std::size_t r) {
      return !table.missing(r, "trial", absent) && seen.insert(table.text(r, "trial")).second;
    });
    if (ids_there) trial_column = "trial";
    else trial_variable = "trial_in_table";
  }
  const std::set<std::string> not_variables = {clock.start_column, end_column, duration_column, trial_column, ""};

  std::vector<Trial> trials;
  std::set<std::string> ids;
  for (std::size_t k = 0; k < rows.size(); ++k) {
    const std::size_t r = rows[k];
    Trial t;
    t.start_us = starts[k];
    if (spec.until_next) {
      t.end_us = k + 1 < rows.size() ? starts[k + 1] - 1 : std::max(samples.last_us, t.start_us);
    } else if (!end_column.empty()) {
      if (table.missing(r, end_column, absent)) fail(r, end_column, "a trial needs its end; found none");
      t.end_us = clock.origin_us + table.time(r, end_column, clock.unit);
    } else {
      if (table.missing(r, duration_column, absent)) {
        fail(r, duration_column, "a trial needs its duration; found none (for rows without one give span = \"next\": "
                                 "each trial then lasts until the next one starts)");
      }
      const Microseconds d = table.time(r, duration_column, clock.unit);
      if (d < 0) fail(r, duration_column, "a duration is zero or positive");
      t.end_us = t.start_us + d;
    }
    if (t.end_us < t.start_us) fail(r, end_column.empty() ? clock.start_column : end_column, "the trial ends before it starts");
    if (t.start_us > samples.last_us || t.end_us < samples.first_us) {
      fail(r, clock.start_column, "this trial, from " + format_seconds(t.start_us) + " to " + format_seconds(t.end_us) +
                                      " on the recording's clock, lies outside its samples (" + format_seconds(samples.first_us) +
                                      " to " + format_seconds(samples.last_us) + "): " + clock.hint);
    }
    if (!trial_column.empty()) {
      if (table.missing(r, trial_column, absent)) fail(r, trial_column, "a trial needs its id; found none");
      t.id = table.text(r, trial_column);
    } else {
      t.id = std::to_string(k + 1);
    }
    if (!ids.insert(t.id).second) {
      fail(r, trial_column, "trial id '" + t.id + "' appears more than once; trial ids must be unique within a recording");
    }
    for (const auto& column : table.columns()) {
      if (not_variables.count(column) || table.missing(r, column, absent)) continue;
      t.variables[column == "trial" ? trial_variable : column] = table.text(r, column);
    }
    trials.push_back(std::move(t));
  }

  // Markers from the messages inside each trial, as with message patterns.
  if (!spec.marker_patterns.empty()) {
    std::vector<std::pair<std::string, NamedRegex>> markers;
    for (const auto& [name, pattern] : spec.marker_patterns) markers.emplace_back(name, NamedRegex(pattern));
    for (auto& t : trials) {
      auto m = std::lower_bound(messages.begin(), messages.end(), t.start_us,
                                [](const Message& a, Microseconds time) { return a.time_us < time; });
      for (; m != messages.end() && m->time_us <= t.end_us; ++m) {
        for (const auto& [name, re] : markers) {
          try {
            if (!t.markers.count(name) && re.search(m->text)) t.markers[name] = m->time_us;
          } catch (const std::length_error& e) {
            throw InputError({in.sample_file, 0, "message"}, e.what());
          }
        }
      }
    }
  }
  return trials;
}

}  // namespace gazemill
