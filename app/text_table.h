#pragma once
// A plain-text table with aligned columns, for terminal reports.

#include <ostream>
#include <string>
#include <vector>

namespace gazemill {

class TextTable {
 public:
  explicit TextTable(std::vector<std::string> header, std::vector<bool> right_aligned = {});
  void add_row(std::vector<std::string> row);
  void print(std::ostream& out) const;

 private:
  std::vector<std::string> header_;
  std::vector<bool> right_;
  std::vector<std::vector<std::string>> rows_;
};

}  // namespace gazemill
