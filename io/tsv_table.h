#pragma once
// A small tab-separated table of text cells with a header, for region and
// item files; errors name the file, line and column.

#include <map>
#include <optional>
#include <string>
#include <vector>

namespace gazemill {

class TsvTable {
 public:
  /// Reads `path`; lines starting with '#' and empty lines are skipped.
  /// Throws InputError on a row with a different number of fields.
  explicit TsvTable(const std::string& path);
  std::size_t rows() const { return cells_.size(); }
  bool has(const std::string& column) const { return index_.count(column) > 0; }
  /// The header's column names, in file order.
  std::vector<std::string> columns() const;
  /// Throws InputError naming the file and the missing column.
  const std::string& text(std::size_t row, const std::string& column) const;
  std::string text_or(std::size_t row, const std::string& column, const std::string& fallback) const;
  /// Throws InputError naming file, line and column when the cell is not a
  /// finite number.
  double number(std::size_t row, const std::string& column) const;
  /// The same for a whole number from `least` to `most`.
  int whole(std::size_t row, const std::string& column, int least, int most) const;
  const std::string& path() const { return path_; }
  std::size_t line_of(std::size_t row) const { return lines_[row]; }

 private:
  std::string path_;
  std::map<std::string, std::size_t> index_;
  std::vector<std::vector<std::string>> cells_;
  std::vector<std::size_t> lines_;
};

}  // namespace gazemill
