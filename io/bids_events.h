#pragma once
// Event tables: the BIDS task *_events.tsv (a header line), the header-less
// *_physioevents.tsv.gz (columns from its sidecar), and a lab's own trial
// table; plain or gzip, a UTF-8 byte-order mark allowed, "n/a" the missing
// value (BIDS specification v1.11.0, "Common principles > Tabular files").
// And the tracker's own events read from them.

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/events.h"
#include "pipeline/recording.h"
#include "pipeline/time_units.h"

namespace gazemill {

/// A small delimited table of text cells. Errors name the file, line and column.
class EventTable {
 public:
  /// Reads `path`. With `columns` empty the first non-empty line is the
  /// header; otherwise the file has no header and these are its columns.
  /// Empty lines are skipped. Throws InputError on a row with another
  /// number of fields, a blank or repeated column name that holds values,
  /// or UTF-16 text.
  EventTable(const std::string& path, char delimiter = '\t', std::vector<std::string> columns = {});

  std::size_t rows() const { return cells_.size(); }
  const std::vector<std::string>& columns() const { return columns_; }
  bool has(const std::string& column) const;
  /// The cell's text, trimmed of spaces; "" when the column is absent.
  const std::string& text(std::size_t row, const std::string& column) const;
  /// True when the cell is "n/a", empty, or one of `also`.
  bool missing(std::size_t row, const std::string& column, const std::vector<std::string>& also = {}) const;
  /// The cell as a time in `unit`, exactly in microseconds (a decimal,
  /// optionally with an exponent; rounded to the microsecond only past six
  /// decimals of seconds). Throws InputError naming file, line and column.
  Microseconds time(std::size_t row, const std::string& column, TimeUnit unit) const;
  std::size_t line_of(std::size_t row) const { return lines_[row]; }
  std::size_t header_line() const { return header_line_; }
  const std::string& path() const { return path_; }

 private:
  std::string path_;
  std::vector<std::string> columns_;
  std::vector<std::vector<std::string>> cells_;
  std::vector<std::size_t> lines_;
  std::size_t header_line_ = 0;  // 0 for a header-less file
};

/// A decimal time text in `unit` as microseconds, exactly (see EventTable::time);
/// nullopt when the text is no number or out of range.
std::optional<Microseconds> parse_decimal_time(const std::string& text, TimeUnit unit);

/// One of the tracker's own events, as its physio events file gives it:
/// from onset for its duration (end exclusive, as gazemill's own events).
struct TrackerEvent {
  SampleLabel kind = SampleLabel::fixation;  // fixation, saccade or blink
  Eye eye = Eye::left;
  Microseconds start_us = 0;
  Microseconds end_us = 0;
};

}  // namespace gazemill
