#pragma once
// Small delimited tables read whole as text cells: the BIDS task
// *_events.tsv (a header line), the header-less *_physioevents.tsv.gz
// (columns from its sidecar), a lab's own trial table and fixation lists;
// plain or gzip, a UTF-8 byte-order mark allowed, "n/a" always missing
// (BIDS specification v1.11.0, "Common principles > Tabular files").
// Sample exports are not read here: they go through io/delimited_reader.

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/time_units.h"

namespace gazemill {

/// A small delimited table of text cells. Errors name the file, line and column.
class CellTable {
 public:
  /// Reads `path`. With `columns` empty the first non-empty line is the
  /// header; otherwise the file has no header and these are its columns.
  /// Empty lines are skipped. Throws InputError on a row with another
  /// number of fields, a blank or repeated column name that holds values,
  /// or UTF-16 text.
  CellTable(const std::string& path, char delimiter = '\t', std::vector<std::string> columns = {});

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
  /// The cell as a finite number; throws InputError naming file, line and
  /// column, saying `expected` (e.g. "a position in px").
  double number(std::size_t row, const std::string& column, const std::string& expected) const;
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

/// A decimal time text in `unit` as microseconds, exactly (see CellTable::time);
/// nullopt when the text is no number or out of range.
std::optional<Microseconds> parse_decimal_time(const std::string& text, TimeUnit unit);


}  // namespace gazemill
