#include "io/tsv_table.h"

#include <charconv>
#include <cmath>
#include <fstream>

#include "pipeline/input_error.h"

namespace gazemill {

TsvTable::TsvTable(const std::string& path) : path_(path) {
  std::ifstream in(path);
  if (!in) throw InputError({path, 0, ""}, "cannot open the file");
  std::string line;
  std::size_t n = 0;
  std::vector<std::string> header;
  auto split = [](const std::string& s) {
    std::vector<std::string> out(1);
    for (char c : s) {
      if (c == '\t') out.emplace_back();
      else if (c != '\r') out.back() += c;
    }
    return out;
  };
  while (std::getline(in, line)) {
    ++n;
    if (n == 1 && line.rfind("\xEF\xBB\xBF", 0) == 0) line.erase(0, 3);  // a byte-order mark, as the delimited reader
    if (line.empty() || line[0] == '#') continue;
    auto fields = split(line);
    if (header.empty()) {
      header = fields;
      for (std::size_t i = 0; i < header.size(); ++i) {
        // Two columns of one name: which one a reader meant is unknowable.
        if (const auto [first, fresh] = index_.emplace(header[i], i); !fresh) {
          throw InputError({path, n, header[i]}, "the column is named twice in the header (columns " + std::to_string(first->second + 1) +
                                                     " and " + std::to_string(i + 1) + ")" +
                                                     (header[i].empty() ? ": two columns without a name, a tab too many?" : ""));
        }
      }
      continue;
    }
    if (fields.size() != header.size()) {
      throw InputError({path, n, ""}, "expected " + std::to_string(header.size()) + " tab-separated fields as in the header, found " +
                                          std::to_string(fields.size()));
    }
    cells_.push_back(std::move(fields));
    lines_.push_back(n);
  }
  if (header.empty()) throw InputError({path, 0, ""}, "the file is empty; expected a header line");
}

const std::string& TsvTable::text(std::size_t row, const std::string& column) const {
  auto it = index_.find(column);
  if (it == index_.end()) throw InputError({path_, 1, column}, "required column is missing from the header");
  return cells_[row][it->second];
}

std::string TsvTable::text_or(std::size_t row, const std::string& column, const std::string& fallback) const {
  return has(column) ? text(row, column) : fallback;
}

double TsvTable::number(std::size_t row, const std::string& column) const {
  const std::string& s = text(row, column);
  double v = 0;
  const auto r = std::from_chars(s.data(), s.data() + s.size(), v);
  if (s.empty() || r.ec != std::errc() || r.ptr != s.data() + s.size() || !std::isfinite(v)) {
    throw InputError({path_, lines_[row], column}, "expected a number, found '" + s + "'");
  }
  return v;
}

int TsvTable::whole(std::size_t row, const std::string& column, int least, int most) const {
  const double v = number(row, column);
  // Checked before the cast: converting an out-of-range double to int is undefined (found by fuzzing).
  if (v != std::floor(v) || v < least || v > most) {
    throw InputError({path_, lines_[row], column}, "expected a whole number from " + std::to_string(least) + " to " +
                                                       std::to_string(most) + ", found '" + text(row, column) + "'");
  }
  return static_cast<int>(v);
}

std::vector<std::string> TsvTable::columns() const {
  std::vector<std::string> out(index_.size());
  for (const auto& [name, i] : index_) out[i] = name;
  return out;
}

}  // namespace gazemill
