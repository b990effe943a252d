#include "app/text_table.h"

#include <algorithm>
#include <iomanip>

namespace gazemill {

TextTable::TextTable(std::vector<std::string> header, std::vector<bool> right_aligned)
    : header_(std::move(header)), right_(std::move(right_aligned)) {
  right_.resize(header_.size(), false);
}

void TextTable::add_row(std::vector<std::string> row) {
  row.resize(header_.size());
  rows_.push_back(std::move(row));
}

void TextTable::print(std::ostream& out) const {
  std::vector<std::size_t> width(header_.size());
  for (std::size_t c = 0; c < header_.size(); ++c) {
    width[c] = header_[c].size();
    for (const auto& r : rows_) width[c] = std::max(width[c], r[c].size());
  }
  auto line = [&](const std::vector<std::string>& cells) {
    for (std::size_t c = 0; c < cells.size(); ++c) {
      if (c) out << "  ";
      out << (right_[c] ? std::right : std::left) << std::setw(static_cast<int>(width[c])) << cells[c];
    }
    out << std::left << '\n';
  };
  line(header_);
  std::vector<std::string> rule;
  for (auto w : width) rule.emplace_back(w, '-');
  line(rule);
  for (const auto& r : rows_) line(r);
}

}  // namespace gazemill
