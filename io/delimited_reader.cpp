#include "io/delimited_reader.h"

#include <fast_float/fast_float.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstring>
#include <limits>
#include <map>
#include <memory>
#include <optional>
#include <stdexcept>
#include <string_view>

#include "io/byte_source.h"
#include "io/decimal_to_float.h"
#include "io/mapped_window.h"
#include "io/row_group_reader.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace {

constexpr std::size_t kBlockBytes = 1 << 20;  // read() into a buffer: gzip, pipes
constexpr std::size_t kNoColumn = std::numeric_limits<std::size_t>::max();
constexpr float kNaN = std::numeric_limits<float>::quiet_NaN();

std::string_view trim(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\r')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\r')) s.remove_suffix(1);
  return s;
}

// Plain decimals such as "-512.25" are most of any export: the digits are read
// as one integer and a count of decimals, and decimal_to_float gives the float
// that parsing to double and narrowing gives (the numpy/pandas path). Anything
// else (exponents, long mantissas, inf/nan words) goes to fast_float.
// scan_plain_decimal reads sign, digits and one dot at p and stops at the
// first other character; `digits` is 0 when none was read.
struct PlainDecimal {
  std::uint64_t mantissa = 0;
  int digits = 0;
  int decimals = 0;
  bool negative = false;
  const char* end = nullptr;
  double value() const;
};

double PlainDecimal::value() const { return decimal_to_double(mantissa, decimals, negative); }

// With kSentinel the data is followed by a byte that is not a digit (the
// reader puts a '\0' after each block), so the digit loops need not compare
// against `end`; it is not read then.
template <bool kSentinel>
inline PlainDecimal scan_decimal(const char* p, const char* end) {
  const auto more = [&] { return kSentinel || p != end; };
  // Locals, not the struct's fields, in the loop: they stay in registers.
  bool negative = false;
  if (more() && *p == '-') {
    negative = true;
    ++p;
  }
  // Whole part, then the fraction: counts come from pointer differences, so
  // the per-character loop only converts (about a third of parse instructions).
  std::uint64_t mantissa = 0;
  const auto read_digits = [&] {
    for (; more(); ++p) {
      const unsigned digit = static_cast<unsigned>(static_cast<unsigned char>(*p)) - '0';
      if (digit > 9) break;
      mantissa = mantissa * 10 + digit;
    }
  };
  const char* whole = p;
  read_digits();
  int digits = static_cast<int>(p - whole), decimals = 0;
  if (more() && *p == '.') {
    const char* fraction = ++p;
    read_digits();
    decimals = static_cast<int>(p - fraction);
    digits += decimals;
  }
  PlainDecimal d;
  d.mantissa = mantissa;
  d.digits = digits;
  d.decimals = decimals;
  d.negative = negative;
  d.end = p;
  return d;
}

inline PlainDecimal scan_plain_decimal(const char* p, const char* end) { return scan_decimal<false>(p, end); }

// Times past 2^61 us (about 73 000 years) either way are no timestamps; beyond
// them the microseconds, or the difference of two, may not fit in 64 bits
// (15 digits of seconds overflowed). The scale functions give
// kTimeOutOfRange for them.
constexpr Microseconds kMaxTimeUs = Microseconds{1} << 61;
constexpr Microseconds kTimeOutOfRange = std::numeric_limits<Microseconds>::max();

// A whole number (>= 0) of `unit` in microseconds, exactly.
Microseconds scale_whole_time_in(TimeUnit unit, std::int64_t whole) {
  switch (unit) {
    case TimeUnit::seconds: return whole <= kMaxTimeUs / kMicrosecondsPerSecond ? whole * kMicrosecondsPerSecond : kTimeOutOfRange;
    case TimeUnit::milliseconds:
      return whole <= kMaxTimeUs / kMicrosecondsPerMillisecond ? whole * kMicrosecondsPerMillisecond : kTimeOutOfRange;
    case TimeUnit::microseconds: return whole <= kMaxTimeUs ? whole : kTimeOutOfRange;
    case TimeUnit::nanoseconds:  // round half up, as llround for positives
      return (whole + kNanosecondsPerMicrosecond / 2) / kNanosecondsPerMicrosecond;
  }
  return whole;
}

// A time in `unit` that is not a whole number, in microseconds, rounded.
Microseconds scale_time_in(TimeUnit unit, double value) {
  const double us = value * microseconds_per(unit);
  if (!(std::fabs(us) <= static_cast<double>(kMaxTimeUs))) return kTimeOutOfRange;
  return static_cast<Microseconds>(std::llround(us));
}

// A row group's times in microseconds, scaled as the row path scales them,
// when each is later than the one before it: the first later than `last`,
// unless it is the recording's first sample. False otherwise (the row path
// then repairs or reports them).
bool group_times(const RowGroup& g, TimeUnit unit, Microseconds last, bool first_sample, Microseconds (&t)[kGroupRows]) {
  for (int i = 0; i < kGroupRows; ++i) t[i] = scale_whole_time_in(unit, static_cast<std::int64_t>(g.time[i]));
  if (!g.time_whole) {
    for (int i = 0; i < kGroupRows; ++i) {
      const bool negative = (g.time_negative >> i) & 1;
      if (g.time_decimals[i] != 0 || negative) t[i] = scale_time_in(unit, decimal_to_double(g.time[i], g.time_decimals[i], negative));
    }
  }
  for (int i = 0; i < kGroupRows; ++i) {
    if (t[i] == kTimeOutOfRange || (t[i] <= last && !(first_sample && i == 0))) return false;
    last = t[i];
  }
  return true;
}

std::string describe(char delimiter) {
  if (delimiter == '\t') return "tab";
  return std::string("'") + delimiter + "'";
}

struct EyeIndex {
  std::size_t x = kNoColumn, y = kNoColumn, pupil = kNoColumn;
};

// Resolved column positions and the per-row parsing state.
class RowParser {
 public:
  RowParser(const std::string& path, const DelimitedReadOptions& opt, SampleSink& sink)
      : path_(path), opt_(opt), layout_(opt.layout), sink_(sink) {
    for (const auto& t : layout_.missing_values) {
      max_token_length_ = std::max(max_token_length_, t.size());
      const PlainDecimal d = scan_plain_decimal(t.data(), t.data() + t.size());
      if (d.digits > 0 && d.end == t.data() + t.size()) numeric_tokens_ = true;
    }
    chunk_.has_left = layout_.left.has_value();
    chunk_.has_right = layout_.right.has_value();
    size_chunk(capacity_);
    if (!opt.column_names.empty()) set_header(opt.column_names, 0);
  }

  bool has_header() const { return !names_.empty(); }

  void set_header(const std::vector<std::string>& names, std::size_t line) {
    names_ = names;
    auto find = [&](const std::string& name, const std::string& key) -> std::size_t {
      if (name.empty()) return kNoColumn;
      auto it = std::find(names_.begin(), names_.end(), name);
      if (it != names_.end() && std::find(it + 1, names_.end(), name) != names_.end()) {
        throw InputError({path_, line, name}, "column named by protocol key " + opt_.layout_key + "." + key +
                                                  " appears more than once in the header; which one is meant?");
      }
      if (it == names_.end()) {
        std::string have;
        for (const auto& n : names_) have += (have.empty() ? "" : ", ") + n;
        throw InputError({path_, line, name},
                         "column named by protocol key " + opt_.layout_key + "." + key +
                             " is not in the header; the file has: " + have);
      }
      return static_cast<std::size_t>(it - names_.begin());
    };
    time_ = find(layout_.time_column, "time_column");
    if (time_ == kNoColumn) throw InputError({path_, line, ""}, "no time column configured (" + opt_.layout_key + ".time_column)");
    message_ = find(layout_.message_column, "message_column");
    status_ = find(layout_.status_column, "status_column");
    if (layout_.left) left_ = {find(layout_.left->x, "left.x_column"), find(layout_.left->y, "left.y_column"), find(layout_.left->pupil, "left.pupil_column")};
    if (layout_.right) right_ = {find(layout_.right->x, "right.x_column"), find(layout_.right->y, "right.y_column"), find(layout_.right->pupil, "right.pupil_column")};
    fields_.resize(names_.size());
    role_of_.assign(names_.size(), kNone);
    auto set = [&](std::size_t column, int role) {
      if (column != kNoColumn) role_of_[column] = role;
    };
    set(time_, kTime);
    set(left_.x, kLeftX);
    set(left_.y, kLeftY);
    set(left_.pupil, kLeftPupil);
    set(right_.x, kRightX);
    set(right_.y, kRightY);
    set(right_.pupil, kRightPupil);
    // A status column is read on the careful path only: the quicker paths
    // skip the columns they do not map.
    common_rows_ = opt_.common_row_path && (layout_.left || layout_.right) && status_ == kNoColumn;
    group_layout_ = common_rows_ && opt_.row_groups ? row_group_layout_for_header() : RowGroupLayout{};
  }

  // How read_row_group reads this header's rows, and where its values go;
  // a layout with no time column when groups cannot be used.
  RowGroupLayout row_group_layout_for_header() {
    const std::size_t columns = names_.size();
    if (!row_groups_supported() || columns > static_cast<std::size_t>(kGroupMaxColumns) ||
        layout_.missing_values.size() > static_cast<std::size_t>(kGroupMaxTokens)) {
      return {};
    }
    RowGroupLayout g = row_group_layout(layout_.delimiter, static_cast<int>(columns));
    g.time_column = static_cast<int>(time_);
    g.message_column = message_ == kNoColumn ? -1 : static_cast<int>(message_);
    g.numeric_tokens = numeric_tokens_;
    for (const auto& t : layout_.missing_values) {
      if (t.size() > 8) continue;  // no field a group reads is longer
      std::uint64_t word = 0;
      std::memcpy(&word, t.data(), t.size());
      g.token_word[g.token_count] = word;
      g.token_length[g.token_count++] = static_cast<int>(t.size());
    }
    std::fill(std::begin(left_slots_), std::end(left_slots_), -1);
    std::fill(std::begin(right_slots_), std::end(right_slots_), -1);
    for (std::size_t c = 0; c < columns; ++c) {
      const int role = role_of_[c];
      if (role <= kTime) continue;
      (role <= kLeftPupil ? left_slots_[role - kLeftX] : right_slots_[role - kRightX]) = g.value_count;
      g.value_columns[g.value_count++] = static_cast<int>(c);
    }
    return g;
  }

  void parse_header(std::string_view line, std::size_t line_no) {
    std::vector<std::string> names;
    split(line, [&](std::size_t, std::string_view f) { names.emplace_back(trim(f)); return true; });
    set_header(names, line_no);
  }

  void parse_row(std::string_view line, std::size_t line_no) {
    // One pass over the line: numeric columns are read while their field is
    // found; anything unusual falls back to the careful path per field.
    const std::size_t expected = names_.size();
    const char delimiter = layout_.delimiter;
    const char* p = line.data();
    const char* end = p + line.size();
    std::size_t count = 0;
    for (;;) {
      const char* start = p;
      const int role = count < expected ? role_of_[count] : kNone;
      if (role != kNone) {
        const PlainDecimal d = scan_plain_decimal(p, end);
        fast_[role] = d.digits > 0 && d.digits <= 15 && (d.end == end || *d.end == delimiter);
        if (fast_[role]) {
          // Field by field: copying the struct whole stalls on store forwarding.
          mantissa_[role] = d.mantissa;
          decimals_[role] = d.decimals;
          negative_[role] = d.negative;
          p = d.end;
        }
      }
      while (p != end && *p != delimiter) ++p;
      if (count < expected) fields_[count] = std::string_view(start, static_cast<std::size_t>(p - start));
      if (role != kNone && fast_[role] && numeric_tokens_ && is_missing(fields_[count])) fast_[role] = false;
      ++count;
      if (p == end) break;
      ++p;
    }
    if (count != expected) {
      if (line.find('\0') != std::string_view::npos) damaged(line_no, "");
      throw InputError({path_, line_no, ""}, "expected " + std::to_string(expected) + " " + describe(layout_.delimiter) +
                                                 "-separated fields as in the header, found " + std::to_string(count));
    }
    ++result_.rows;

    std::string_view message = message_ != kNoColumn ? trim(fields_[message_]) : std::string_view{};
    if (is_missing(message)) message = {};  // e.g. BIDS writes n/a where a row has no message
    const Microseconds t = parse_time(line_no);
    if (!message.empty()) {
      // The store keeps C strings: a NUL would cut the message short unseen.
      if (message.find('\0') != std::string_view::npos) damaged(line_no, names_[message_]);
      result_.messages.push_back({t, std::string(message)});
      result_.message_lines.push_back(line_no);
      // A row with a message and no gaze values at all is a message row, not a sample.
      if (!layout_.left && !layout_.right) return;
      if (!opt_.gazeless_message_rows_are_samples && all_gaze_missing()) return;
    } else if (!layout_.left && !layout_.right) {
      return;  // message files: rows without text carry nothing
    }

    if (result_.samples > 0) {
      if (t < last_time_) {
        throw InputError({path_, line_no, layout_.time_column},
                         "timestamps must not decrease: " + std::string(trim(fields_[time_])) +
                             " comes after a sample at a later time");
      }
      if (t == last_time_) {
        if (opt_.duplicate_timestamps == DuplicateTimestampPolicy::keep_first) {
          ++result_.repairs["duplicate_timestamp_dropped"];
          return;
        }
        throw InputError({path_, line_no, layout_.time_column},
                         "duplicate timestamp " + std::string(trim(fields_[time_])) +
                             "; each sample needs its own time (set input.repairs.duplicate_timestamps = \"keep_first\" to drop repeats)");
      }
    } else {
      result_.first_time_us = t;
    }
    last_time_ = t;
    ++result_.samples;
    chunk_.time_us[rows_in_chunk_] = t;
    const bool invalid = status_ != kNoColumn && is_invalid_status(trim(fields_[status_]));
    if (invalid) ++result_.repairs["status_invalid_read_as_missing"];
    if (layout_.left) put_eye(chunk_.left, left_, line_no, result_.missing_left, invalid);
    if (layout_.right) put_eye(chunk_.right, right_, line_no, result_.missing_right, invalid);
    if (++rows_in_chunk_ == capacity_) flush();
  }

  // Reads the common rows from p on, one after another, until a row that is
  // not common or the end of the data; returns where it stopped, the start of
  // a line for parse_row. A common row has a number or a missing token in
  // every mapped column, an empty message column, no spaces, a later time
  // than the row before, and ends with '\n' (or "\r\n") before `end`;
  // *end must be '\0', the sentinel the digit loops stop at.
  // parse_row would read such rows to the same samples; this path exists for
  // speed: the state lives in locals for the whole run of rows, because the
  // byte stores of the valid column may alias any member and would force the
  // compiler to reload every member after each row.
  const char* parse_common_rows(const char* p, const char* const end, std::size_t& line_no) {
    if (!common_rows_) return p;
    // The usual layout, one eye with no numeric missing token and no zero
    // rule, gets its own copy of the loop with those choices fixed at compile
    // time: fewer live values and branches per row (about 8 % faster).
    if (!numeric_tokens_ && !layout_.zero_gaze_is_missing && layout_.left.has_value() != layout_.right.has_value()) {
      return layout_.left ? common_rows<false, true>(p, end, line_no) : common_rows<false, false>(p, end, line_no);
    }
    return common_rows<true, false>(p, end, line_no);
  }

  // kGeneral: the eyes and the token and zero rules come from the layout.
  // Otherwise only the left eye (kLeft) or only the right one is mapped and
  // neither rule applies.
  template <bool kGeneral, bool kLeft>
  const char* common_rows(const char* p, const char* const end, std::size_t& line_no) {
    const std::size_t columns = names_.size();
    const int* const role_of = role_of_.data();
    const char delimiter = layout_.delimiter;
    const std::size_t message_column = message_;
    const bool left = kGeneral ? layout_.left.has_value() : kLeft;
    const bool right = kGeneral ? layout_.right.has_value() : !kLeft;
    const bool zero_is_missing = kGeneral && layout_.zero_gaze_is_missing;
    const bool numeric_tokens = kGeneral && numeric_tokens_;
    const TimeUnit unit = layout_.time_unit;
    // Rows are written by index into the chunk's columns, which stay sized for
    // a whole chunk (size_chunk): push_back reloads and stores each vector's
    // end on every row, as the byte stores to `valid` may alias it (see
    // DEVELOPERS.md for what this saved). The pointers are locals, which
    // nothing aliases.
    struct EyeColumns {
      float *x = nullptr, *y = nullptr, *pupil = nullptr;
      std::uint8_t* valid = nullptr;
    };
    Microseconds* times = nullptr;
    EyeColumns left_columns, right_columns;
    const auto find_columns = [&] {
      times = chunk_.time_us.data();
      const auto eye = [](EyeSamples& e) { return EyeColumns{e.x_px.data(), e.y_px.data(), e.pupil.data(), e.valid.data()}; };
      if (left) left_columns = eye(chunk_.left);
      if (right) right_columns = eye(chunk_.right);
    };
    find_columns();

    std::size_t k = rows_in_chunk_;
    std::uint64_t samples = result_.samples, rows = result_.rows;
    std::uint64_t missing_left = result_.missing_left, missing_right = result_.missing_right;
    Microseconds last = last_time_;
    std::size_t lines = 0;

    float value[kRoles];
    std::fill(std::begin(value), std::end(value), kNaN);  // unmapped roles stay NaN
    const bool groups = group_layout_.time_column >= 0;
    int single_rows = 0;  // rows to read one at a time before the next group
    int failed_groups = 0;  // in a row
    RowGroup group;
    while (p < end) {
      if (groups && single_rows == 0 && k + kGroupRows <= capacity_) {
        Microseconds t[kGroupRows];
        if (read_row_group(p, end, group_layout_, group) && group_times(group, unit, last, samples == 0, t)) {
          if (samples == 0) result_.first_time_us = t[0];
          std::copy(t, t + kGroupRows, times + k);
          const auto store = [&](const int* slot, const EyeColumns& eye, std::uint64_t& missing) {
            missing += store_eye_group(group, slot, zero_is_missing, eye.x + k, eye.y + k, eye.pupil + k, eye.valid + k);
          };
          if (left) store(left_slots_, left_columns, missing_left);
          if (right) store(right_slots_, right_columns, missing_right);
          k += kGroupRows;
          last = t[kGroupRows - 1];
          samples += kGroupRows, rows += kGroupRows, lines += kGroupRows;
          result_.grouped_rows += kGroupRows;
          p = group.end;
          failed_groups = 0;
          if (k == capacity_) {
            rows_in_chunk_ = k;
            flush();
            find_columns();
            k = 0;
          }
          continue;
        }
        // A group that fails is read row by row; after many in a row, groups
        // are tried less often (files whose rows never fit one).
        ++failed_groups;
        single_rows = failed_groups < 8 ? kGroupRows : kGroupRows << std::min(failed_groups - 8, 7);
      }
      if (single_rows > 0) --single_rows;
      const char* q = p;
      PlainDecimal time;
      bool common = true;
      for (std::size_t c = 0; c < columns && common; ++c) {
        const char* field = q;
        const int role = role_of[c];
        if (role != kNone) {
          const PlainDecimal d = scan_decimal<true>(q, end);
          q = d.end;
          bool missing = false;
          if (d.digits == 0) {  // "", ".", a lone sign, or a word such as NaN
            while (q < end && *q != delimiter && *q != '\n' && *q != '\r') ++q;
            missing = is_missing(std::string_view(field, static_cast<std::size_t>(q - field)));
            common = missing;
          } else if (d.digits > 15) {
            common = false;
          } else if (numeric_tokens) {
            missing = is_missing(std::string_view(field, static_cast<std::size_t>(q - field)));
          }
          if (role == kTime) {
            common = common && !missing;
            time = d;  // converted after the row, out of this loop's way
          } else {
            // Past 15 digits the row goes to the careful path and this value is
            // unused, but the table index must stay in bounds (found by
            // fuzzing). A min, not a branch on `common`: that branch measured
            // about a fifth slower.
            value[role] = missing ? kNaN : decimal_to_float(d.mantissa, std::min(d.decimals, 15), d.negative);
          }
        } else if (c != message_column) {
          while (q < end && *q != delimiter && *q != '\n') ++q;  // a column nobody asked for
        }
        if (!common || q >= end) {
          common = false;
        } else if (c + 1 < columns) {
          common = *q == delimiter;  // not so: a message, spaces, or too few fields
          ++q;
        } else {
          if (*q == '\r' && q + 1 < end) ++q;
          common = *q == '\n';  // not so: too many fields
          ++q;
        }
      }
      if (!common) break;
      // As parse_time: whole numbers exactly, others through the double.
      const Microseconds t = !time.negative && time.decimals == 0
                                 ? scale_whole_time_in(unit, static_cast<std::int64_t>(time.mantissa))
                                 : scale_time_in(unit, time.value());
      if (t == kTimeOutOfRange) break;  // parse_row reports it
      if (samples > 0) {
        if (t <= last) break;  // parse_row repairs or reports it
      } else {
        result_.first_time_us = t;
      }
      last = t;
      ++samples, ++rows, ++lines;
      times[k] = t;
      // The rule of put_eye, repeated here because a shared non-lambda helper
      // measured slower on this loop; the CommonRows tests hold the two equal.
      const auto put = [&](float x, float y, float pupil, const EyeColumns& eye, std::uint64_t& missing) {
        if (zero_is_missing && x == 0.0f && y == 0.0f) x = y = kNaN;
        const bool ok = std::isfinite(x) && std::isfinite(y);
        if (!ok) x = y = kNaN;  // half a coordinate is no position
        missing += !ok;
        eye.x[k] = x, eye.y[k] = y, eye.pupil[k] = pupil, eye.valid[k] = ok;
      };
      if (left) put(value[kLeftX], value[kLeftY], value[kLeftPupil], left_columns, missing_left);
      if (right) put(value[kRightX], value[kRightY], value[kRightPupil], right_columns, missing_right);
      p = q;
      if (++k == capacity_) {
        rows_in_chunk_ = k;
        flush();
        find_columns();
        k = 0;
      }
    }
    rows_in_chunk_ = k;
    result_.samples = samples, result_.rows = rows;
    result_.missing_left = missing_left, result_.missing_right = missing_right;
    last_time_ = last;
    line_no += lines;
    return p;
  }

  // Hands the rows read so far to the sink. The columns are cut to those rows
  // for the sink and then sized for a whole chunk again: a zero-fill only
  // after a partial chunk, the last one.
  void flush() {
    if (rows_in_chunk_ == 0) return;
    size_chunk(rows_in_chunk_);
    count_intervals();
    sink_.append(chunk_);
    size_chunk(capacity_);
    rows_in_chunk_ = 0;
  }

  void size_chunk(std::size_t rows) {
    chunk_.time_us.resize(rows);
    const auto size_eye = [rows](EyeSamples& eye) {
      eye.x_px.resize(rows), eye.y_px.resize(rows), eye.pupil.resize(rows), eye.valid.resize(rows);
    };
    if (chunk_.has_left) size_eye(chunk_.left);
    if (chunk_.has_right) size_eye(chunk_.right);
  }

  // The histogram of sample intervals, counted per chunk: one tight loop here
  // costs less than the same bookkeeping in the row loops.
  void count_intervals() {
    const std::vector<Microseconds>& times = chunk_.time_us;
    std::size_t i = 0;
    if (!counted_any_) {
      counted_any_ = true;
      counted_until_ = times[0];
      i = 1;
    }
    Microseconds previous = counted_until_, run_interval = run_interval_;
    std::uint64_t run_length = run_length_;
    for (; i < times.size(); ++i) {
      const Microseconds interval = times[i] - previous;
      previous = times[i];
      if (interval != run_interval) {
        if (run_length) intervals_[run_interval] += run_length;
        run_interval = interval;
        run_length = 0;
      }
      ++run_length;
    }
    counted_until_ = previous, run_interval_ = run_interval, run_length_ = run_length;
  }

  DelimitedReadResult finish() {
    flush();
    result_.last_time_us = last_time_;
    if (run_length_) intervals_[run_interval_] += run_length_;
    result_.has_left = layout_.left.has_value();
    result_.has_right = layout_.right.has_value();
    // Median interval from the histogram of consecutive differences.
    std::uint64_t total = 0;
    for (const auto& [d, n] : intervals_) total += n;
    std::uint64_t seen = 0;
    for (const auto& [d, n] : intervals_) {
      seen += n;
      if (2 * seen >= total) {
        result_.median_interval_us = static_cast<double>(d);
        break;
      }
    }
    return std::move(result_);
  }

 private:
  template <typename F>
  void split(std::string_view line, F&& on_field) const {
    // Fields are short: a plain loop beats a memchr call per field.
    const char delimiter = layout_.delimiter;
    std::size_t i = 0;
    const char* start = line.data();
    const char* end = start + line.size();
    for (const char* p = start; p != end; ++p) {
      if (*p == delimiter) {
        on_field(i++, std::string_view(start, static_cast<std::size_t>(p - start)));
        start = p + 1;
      }
    }
    on_field(i, std::string_view(start, static_cast<std::size_t>(end - start)));
  }

  bool is_missing(std::string_view f) const {
    if (f.size() > max_token_length_) return false;
    for (const auto& t : layout_.missing_values) {
      if (f == t) return true;
    }
    return false;
  }

  bool is_invalid_status(std::string_view f) const {
    for (const auto& v : layout_.invalid_status) {
      if (f == v) return true;
    }
    return false;
  }

  // A message row's gaze may be written as NaN when it is no token: the row
  // stays a message row, as when NaN was one of the default tokens.
  bool no_value(std::string_view f) const {
    if (is_missing(f)) return true;
    double v = 0.0;
    const auto r = fast_float::from_chars(f.data(), f.data() + f.size(), v);
    return r.ec == std::errc() && r.ptr == f.data() + f.size() && std::isnan(v);
  }

  bool all_gaze_missing() const {
    auto eye_missing = [&](const EyeIndex& e) {
      return no_value(trim(fields_[e.x])) && no_value(trim(fields_[e.y]));
    };
    if (layout_.left && !eye_missing(left_)) return false;
    if (layout_.right && !eye_missing(right_)) return false;
    return true;
  }

  [[noreturn]] void damaged(std::size_t line_no, const std::string& field) const {
    throw InputError({path_, line_no, field}, "found NUL bytes (\\0), which no text export writes: the file is damaged "
                                              "(an interrupted write can leave blocks of zeros)");
  }

  [[noreturn]] void not_a_number(std::size_t line_no, std::size_t column, std::string_view f) const {
    if (f.find('\0') != std::string_view::npos) damaged(line_no, names_[column]);
    // Exports written under a European locale use decimal commas.
    const auto comma = f.find(',');
    const bool decimal_comma = comma != std::string_view::npos && comma > 0 && comma + 1 < f.size() &&
                               std::isdigit(static_cast<unsigned char>(f[comma - 1])) &&
                               std::isdigit(static_cast<unsigned char>(f[comma + 1]));
    throw InputError({path_, line_no, names_[column]},
                     "expected a number, found '" + std::string(f) + "'" +
                         (decimal_comma ? " (a decimal comma? numbers need a decimal point; re-export with one)" : ""));
  }

  Microseconds parse_time(std::size_t line_no) const {
    const Microseconds t = parse_time_or_out_of_range(line_no);
    if (t == kTimeOutOfRange) {
      throw InputError({path_, line_no, names_[time_]}, "expected a timestamp within 2^61 microseconds of zero (about 73 000 years), found '" +
                                                            std::string(trim(fields_[time_])) + "'");
    }
    return t;
  }

  Microseconds parse_time_or_out_of_range(std::size_t line_no) const {
    if (fast_[kTime] && decimals_[kTime] == 0 && !negative_[kTime]) {
      return scale_whole_time(static_cast<std::int64_t>(mantissa_[kTime]));
    }
    const std::string_view f = trim(fields_[time_]);
    // Most exports write whole numbers: read the digits directly, exactly.
    if (!f.empty() && f.size() <= 18) {
      std::int64_t whole = 0;
      std::size_t i = 0;
      for (; i < f.size() && f[i] >= '0' && f[i] <= '9'; ++i) whole = whole * 10 + (f[i] - '0');
      if (i == f.size()) return scale_whole_time(whole);
    }
    double v = 0.0;
    auto r = fast_float::from_chars(f.data(), f.data() + f.size(), v);
    if (f.empty() || r.ec != std::errc() || r.ptr != f.data() + f.size() || !std::isfinite(v)) {
      if (f.empty() || is_missing(f)) throw InputError({path_, line_no, names_[time_]}, "expected a timestamp, found an empty or missing value");
      not_a_number(line_no, time_, f);
    }
    return scale_time_in(layout_.time_unit, v);
  }

  Microseconds scale_whole_time(std::int64_t whole) const { return scale_whole_time_in(layout_.time_unit, whole); }

  float parse_value(std::size_t column, std::size_t line_no) const {
    if (column == kNoColumn) return kNaN;
    if (const int role = role_of_[column]; fast_[role]) {
      return decimal_to_float(mantissa_[role], decimals_[role], negative_[role]);
    }
    std::string_view f = fields_[column];
    if (!f.empty() && (f.front() == ' ' || f.back() == ' ' || f.back() == '\r')) f = trim(f);
    if (is_missing(f)) return kNaN;
    if (const PlainDecimal d = scan_plain_decimal(f.data(), f.data() + f.size());
        d.digits > 0 && d.digits <= 15 && d.end == f.data() + f.size()) {
      return decimal_to_float(d.mantissa, d.decimals, d.negative);
    }
    float v = 0.0f;
    auto r = fast_float::from_chars(f.data(), f.data() + f.size(), v);
    if (r.ec != std::errc() || r.ptr != f.data() + f.size()) not_a_number(line_no, column, f);
    // nan, inf and -inf only ever come here: the quicker paths hand any word
    // that is no missing-value token to this one.
    if (!std::isfinite(v)) non_finite_ = true;
    return v;
  }

  void put_eye(EyeSamples& eye, const EyeIndex& idx, std::size_t line_no, std::uint64_t& missing, bool invalid) {
    non_finite_ = false;
    float x = parse_value(idx.x, line_no);
    float y = parse_value(idx.y, line_no);
    if (non_finite_) ++result_.repairs["non_finite_gaze_read_as_missing"];
    const float pupil = parse_value(idx.pupil, line_no);
    if (layout_.zero_gaze_is_missing && x == 0.0f && y == 0.0f) x = y = kNaN;
    if (invalid) x = y = kNaN;
    const bool ok = std::isfinite(x) && std::isfinite(y);
    if (!ok) {
      x = y = kNaN;  // half a coordinate is no position
      ++missing;
    }
    const std::size_t k = rows_in_chunk_;
    eye.x_px[k] = x;
    eye.y_px[k] = y;
    eye.pupil[k] = pupil;
    eye.valid[k] = ok ? 1 : 0;
  }

  const std::string& path_;
  const DelimitedReadOptions& opt_;
  const TableLayout& layout_;
  SampleSink& sink_;
  enum Role { kNone = 0, kTime, kLeftX, kLeftY, kLeftPupil, kRightX, kRightY, kRightPupil, kRoles };
  std::vector<std::string> names_;
  std::vector<std::string_view> fields_;
  std::vector<int> role_of_;          // per column
  bool fast_[kRoles] = {};            // this row's field of the role was a plain decimal
  std::uint64_t mantissa_[kRoles] = {};
  int decimals_[kRoles] = {};
  bool negative_[kRoles] = {};
  bool numeric_tokens_ = false;       // a missing-value token reads as a number (e.g. "-1")
  bool common_rows_ = false;          // parse_common_rows may be tried
  RowGroupLayout group_layout_;       // time_column < 0: rows are not read in groups
  int left_slots_[3] = {-1, -1, -1};   // x, y, pupil: where in a RowGroup's values
  int right_slots_[3] = {-1, -1, -1};
  std::size_t time_ = kNoColumn, message_ = kNoColumn, status_ = kNoColumn;
  mutable bool non_finite_ = false;   // parse_value read nan or inf since put_eye cleared it
  EyeIndex left_, right_;
  std::size_t max_token_length_ = 0;
  SampleColumns chunk_;                // sized for capacity_ rows between flushes
  const std::size_t capacity_ = std::max<std::size_t>(opt_.chunk_rows, 1);
  std::size_t rows_in_chunk_ = 0;      // rows of chunk_ read so far
  Microseconds last_time_ = 0;
  std::map<Microseconds, std::uint64_t> intervals_;  // histogram of sample intervals
  Microseconds run_interval_ = 0;                    // the current run of equal intervals
  std::uint64_t run_length_ = 0;
  bool counted_any_ = false;                         // count_intervals has seen a sample
  Microseconds counted_until_ = 0;                   // the last sample time it has seen
  DelimitedReadResult result_;
};

// Feeds a file's lines to a RowParser, in three steps: plain files from
// mapped windows (read_mapped), the rest (gzip, pipes, or what the system
// would not map) through read() blocks (read_blocks), then the checks of the
// whole file (finish).
class LineFeeder {
 public:
  LineFeeder(const std::string& path, const DelimitedReadOptions& options, SampleSink& sink, ByteSource& source)
      : path_(path), options_(options), source_(source), parser_(path, options, sink) {}

  // A plain file is parsed from mapped windows: no copy into a buffer,
  // which was a sixth of the parsing time. Each window ends after its last
  // whole line; the '\0' sentinel is written just after that line, into
  // this mapping's private copy of the page (the next window maps the
  // file's own bytes again from that line on). Returns whether the whole
  // file was read; if not, the source is left where read_blocks goes on.
  bool read_mapped() {
    const std::uint64_t size = source_.raw_size();
    std::uint64_t offset = 0;  // where the unparsed bytes begin in the file
    const std::size_t page = MappedWindow::page_size();
    const std::size_t window = std::max<std::size_t>(1, (options_.mapped_window_bytes + page - 1) / page) * page;
    while (offset < size) {
      const std::uint64_t map_start = offset / page * page;
      std::size_t length = static_cast<std::size_t>(std::min<std::uint64_t>(window, size - map_start));
      std::unique_ptr<MappedWindow> w;
      const char* begin = nullptr;
      const char* nl = nullptr;
      for (;;) {  // grow the window until it holds a whole line or the rest of the file
        w = MappedWindow::map(source_.descriptor(), map_start, length);
        if (!w) break;
        // Touching mapped pages past a file's end stops the program (SIGBUS):
        // a file cut short by another program is caught here, window by
        // window, as an error instead (a cut while a window is read is not).
        if (const std::uint64_t now = source_.current_size(); now < map_start + length) {
          throw InputError({path_, line_no_, ""}, "the file shrank from " + std::to_string(size) + " to " +
                                                      std::to_string(now) + " bytes while it was being read");
        }
        begin = w->data() + (offset - map_start);
        nl = static_cast<const char*>(::memrchr(begin, '\n', static_cast<std::size_t>(w->data() + length - begin)));
        if (nl || map_start + length == size) break;
        length = static_cast<std::size_t>(std::min<std::uint64_t>(2 * std::uint64_t{length}, size - map_start));
      }
      if (!w) break;  // the system would not map it: read the rest by read_blocks
      char* const data = w->data();
      if (!nl) {  // the rest of the file is one line with no newline at its end
        carry_.assign(begin, static_cast<std::size_t>(data + length - begin));
        offset = size;
        break;
      }
      char* end = data + (nl - data) + 1;
      if (end == data + length && w->slack() == 0) {
        // No byte left in the mapping for the sentinel: the last line waits
        // for the next window, unless it is the only one.
        const char* prev = static_cast<const char*>(::memrchr(begin, '\n', static_cast<std::size_t>(nl - begin)));
        if (!prev) {
          handle_line(std::string_view(begin, static_cast<std::size_t>(nl - begin)));
          offset = map_start + length;
          continue;
        }
        end = data + (prev - data) + 1;
      }
      *end = '\0';  // past the file's end this is the zero slack of its last page
      const std::size_t used = parse_block(begin, static_cast<std::size_t>(end - begin));
      if (used == 0) throw std::logic_error("a mapped window made no progress");  // the block ends with '\n'
      offset += used;
      report(offset);
    }
    if (offset >= size) return true;
    source_.seek(offset);
    return false;
  }

  // The file (or its rest) through read() into a buffer: gzip files, pipes.
  void read_blocks() {
    std::unique_ptr<char[]> buffer(new char[kBlockBytes + 1]);
    for (;;) {
      const std::size_t n = source_.read(buffer.get(), kBlockBytes);
      if (n == 0) break;
      buffer[n] = '\0';
      std::string_view block(buffer.get(), n);
      std::size_t pos = 0;
      if (!carry_.empty()) {
        const char* nl = static_cast<const char*>(std::memchr(block.data(), '\n', block.size()));
        if (!nl) {
          carry_.append(block);
          continue;
        }
        pos = static_cast<std::size_t>(nl - block.data()) + 1;
        carry_.append(block.substr(0, pos - 1));
        handle_line(carry_);
        carry_.clear();
      }
      pos += parse_block(block.data() + pos, block.size() - pos);
      carry_.assign(block.substr(pos));
      report(source_.raw_offset());
    }
  }

  // The last line without a newline, and the checks of the whole file.
  DelimitedReadResult finish() {
    if (!carry_.empty()) handle_line(carry_);
    if (!any_line_) throw InputError({path_, 0, ""}, "the file is empty; expected a header line and sample rows");
    DelimitedReadResult result = parser_.finish();
    if (source_.gzip_trailing_bytes() > 0) result.repairs["gzip_trailing_bytes_ignored"] += source_.gzip_trailing_bytes();
    const bool wants_samples = options_.layout.left || options_.layout.right;
    if (wants_samples && result.samples == 0) {
      throw InputError({path_, line_no_, ""}, "the file has no sample rows; expected at least one row after the header");
    }
    if (options_.progress) options_.progress(source_.raw_size(), source_.raw_size());
    return result;
  }

 private:
  void handle_line(std::string_view line) {
    ++line_no_;
    if (!start_checked_) line.remove_prefix(file_start(line));
    if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
    if (line.empty()) return;
    const std::string& comment = options_.layout.comment_prefix;
    if (!comment.empty() && line.substr(0, comment.size()) == comment) return;
    any_line_ = true;
    if (!parser_.has_header()) {
      parser_.parse_header(line, line_no_);
      return;
    }
    parser_.parse_row(line, line_no_);
  }

  // The file's first bytes, looked at once whichever path reads them first
  // (a second mark is text; found by fuzzing). Returns how many to skip.
  std::size_t file_start(std::string_view start) {
    start_checked_ = true;
    // "Unicode text" from some Windows tools is UTF-16: every other byte a
    // NUL, which would otherwise surface as a header that matches nothing.
    if (start.substr(0, 2) == "\xFF\xFE" || start.substr(0, 2) == "\xFE\xFF") {
      throw InputError({path_, 1, ""}, "the file is UTF-16 text (it starts with a UTF-16 byte-order mark); save or export it as UTF-8");
    }
    // A byte-order mark, which some Windows tools put before UTF-8 text, is
    // no part of the first column's name (common practice, no source).
    return start.substr(0, 3) == "\xEF\xBB\xBF" ? 3 : 0;
  }

  // Parses the whole lines of data[0, size); data[size] must be '\0', the
  // sentinel parse_common_rows relies on. Returns where an unfinished last
  // line starts (size when the data ends with a newline).
  std::size_t parse_block(const char* data, std::size_t size) {
    std::size_t pos = 0;
    // A header-less file (BIDS physio) goes straight to the rows: its
    // byte-order mark is skipped here, before the first row is read.
    if (!start_checked_ && parser_.has_header()) pos = file_start(std::string_view(data, size));
    for (;;) {
      if (parser_.has_header()) {
        const char* start = data + pos;
        const char* stop = parser_.parse_common_rows(start, data + size, line_no_);
        any_line_ = any_line_ || stop != start;
        pos = static_cast<std::size_t>(stop - data);
      }
      const char* nl = static_cast<const char*>(std::memchr(data + pos, '\n', size - pos));
      if (!nl) return pos;
      const std::size_t end = static_cast<std::size_t>(nl - data);
      handle_line(std::string_view(data + pos, end - pos));
      pos = end + 1;
    }
  }

  void report(std::uint64_t done) {
    if (options_.progress && done - last_report_ > (64u << 20)) {
      last_report_ = done;
      options_.progress(done, source_.raw_size());
    }
  }

  const std::string& path_;
  const DelimitedReadOptions& options_;
  ByteSource& source_;
  RowParser parser_;
  std::size_t line_no_ = 0;
  bool start_checked_ = false;  // for a byte-order mark, which only the file's first bytes can be
  bool any_line_ = false;
  std::string carry_;  // an unfinished line at the end of what has been parsed
  std::uint64_t last_report_ = 0;
};

}  // namespace

void check_delimited_header(const std::string& path, const DelimitedReadOptions& options) {
  if (!options.column_names.empty()) return;
  ByteSource source(path);
  std::string text;
  std::unique_ptr<char[]> buffer(new char[kBlockBytes]);
  std::size_t line_no = 0;
  // Whole lines up to the header; a header of over 16 MiB is no header.
  for (std::size_t start = 0; text.size() < (std::size_t{16} << 20);) {
    const std::size_t nl = text.find('\n', start);
    if (nl == std::string::npos) {
      const std::size_t n = source.read(buffer.get(), kBlockBytes);
      if (n == 0) {
        if (start == text.size()) return;  // no header at all: read_delimited says so
        text += '\n';
      } else {
        text.append(buffer.get(), n);
      }
      continue;
    }
    std::string_view line(text.data() + start, nl - start);
    start = nl + 1;
    ++line_no;
    if (line_no == 1 && line.substr(0, 3) == "\xEF\xBB\xBF") line.remove_prefix(3);
    if (line_no == 1 && (line.substr(0, 2) == "\xFF\xFE" || line.substr(0, 2) == "\xFE\xFF")) return;  // read_delimited names it
    if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
    if (line.empty()) continue;
    const std::string& comment = options.layout.comment_prefix;
    if (!comment.empty() && line.substr(0, comment.size()) == comment) continue;
    NullSink none;
    RowParser parser(path, options, none);
    parser.parse_header(line, line_no);
    return;
  }
}

DelimitedReadResult read_delimited(const std::string& path, const DelimitedReadOptions& options, SampleSink& sink) {
  ByteSource source(path);
  LineFeeder feeder(path, options, sink, source);
  const bool whole = source.mappable() && options.map_plain_files && feeder.read_mapped();
  if (!whole) feeder.read_blocks();
  return feeder.finish();
}

}  // namespace gazemill
