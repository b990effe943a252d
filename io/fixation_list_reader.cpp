#include "io/fixation_list_reader.h"

#include <algorithm>
#include <limits>
#include <numeric>

#include "io/cell_table.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace {

std::string listing(const std::vector<std::string>& names) {
  std::string out;
  for (const auto& n : names) {
    if (!n.empty()) out += (out.empty() ? "" : ", ") + n;
  }
  return out.empty() ? "none" : out;
}

}  // namespace

FixationListRead read_fixation_list(const std::string& path, const FixationListSpec& spec) {
  const CellTable table(path, spec.delimiter);
  const auto& absent = spec.missing_values;
  for (const std::string* column : {&spec.start_column, &spec.end_column, &spec.duration_column, &spec.x_column, &spec.y_column,
                                    &spec.pupil_column, &spec.eye_column, &spec.message_column}) {
    if (!column->empty() && !table.has(*column)) {
      throw InputError({path, table.header_line(), *column},
                       "the column [input.fixations] maps is not in the header; the columns are " + listing(table.columns()));
    }
  }
  const std::string unit = to_string(spec.time_unit);
  FixationListRead out;
  Microseconds first = std::numeric_limits<Microseconds>::max(), last = std::numeric_limits<Microseconds>::min();
  std::vector<FixationEvent> rows;
  std::vector<std::size_t> lines;
  for (std::size_t r = 0; r < table.rows(); ++r) {
    const std::size_t line = table.line_of(r);
    auto time_of = [&](const std::string& column, const char* what) {
      if (table.missing(r, column, absent)) throw InputError({path, line, column}, std::string("expected ") + what + " in " + unit + ", found none");
      return table.time(r, column, spec.time_unit);
    };
    if (!spec.message_column.empty() && !table.missing(r, spec.message_column, absent)) {
      const Microseconds t = time_of(spec.start_column, "the message's time");
      out.messages.push_back({t, table.text(r, spec.message_column)});
      out.message_lines.push_back(line);
      first = std::min(first, t);
      last = std::max(last, t);
      continue;
    }
    FixationEvent f;
    if (!spec.eye_column.empty()) {
      const std::string& e = table.text(r, spec.eye_column);
      if (e == spec.left_value) f.eye = Eye::left;
      else if (e == spec.right_value) f.eye = Eye::right;
      else {
        throw InputError({path, line, spec.eye_column}, "expected \"" + spec.left_value + "\" or \"" + spec.right_value + "\" (left_value, " +
                                                             "right_value in [input.fixations]), found '" + e + "'");
      }
      if (spec.eye && f.eye != *spec.eye) {
        ++out.other_eye_rows;
        continue;
      }
    } else {
      f.eye = *spec.eye;
    }
    f.start_us = time_of(spec.start_column, "the fixation's start");
    if (!spec.end_column.empty()) {
      f.end_us = time_of(spec.end_column, "the fixation's end");
      if (f.end_us <= f.start_us) throw InputError({path, line, spec.end_column}, "expected an end after the fixation's start");
    } else {
      const Microseconds d = time_of(spec.duration_column, "the fixation's duration");
      if (d <= 0) throw InputError({path, line, spec.duration_column}, "expected a positive duration in " + unit);
      f.end_us = f.start_us + d;
    }
    for (const std::string* column : {&spec.x_column, &spec.y_column}) {
      if (table.missing(r, *column, absent)) throw InputError({path, line, *column}, "expected the fixation's position in px, found none");
    }
    f.x_px = f.x_median_px = table.number(r, spec.x_column, "a position in px");
    f.y_px = f.y_median_px = table.number(r, spec.y_column, "a position in px");
    if (!spec.pupil_column.empty() && !table.missing(r, spec.pupil_column, absent)) {
      f.pupil = table.number(r, spec.pupil_column, "a pupil size (a number)");
    }
    // Not known from a list: the spread of its samples.
    f.dispersion_deg = std::numeric_limits<double>::quiet_NaN();
    first = std::min(first, f.start_us);
    last = std::max(last, f.end_us);
    rows.push_back(f);
    lines.push_back(line);
  }
  std::vector<std::size_t> order(rows.size());
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return rows[a].start_us < rows[b].start_us; });
  for (std::size_t i : order) {
    out.fixations.push_back(rows[i]);
    out.fixation_lines.push_back(lines[i]);
  }
  if (first <= last) {
    out.first_us = first;
    out.last_us = last;
  }
  return out;
}

}  // namespace gazemill
