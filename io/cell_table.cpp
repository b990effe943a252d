#include "io/cell_table.h"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <set>

#include "io/byte_source.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace {

std::string trim(const std::string& s) {
  std::size_t a = 0, b = s.size();
  while (a < b && (s[a] == ' ' || s[a] == '\r')) ++a;
  while (b > a && (s[b - 1] == ' ' || s[b - 1] == '\r')) --b;
  return s.substr(a, b - a);
}

std::vector<std::string> split(const std::string& line, char delimiter) {
  std::vector<std::string> out(1);
  for (char c : line) {
    if (c == delimiter) out.emplace_back();
    else out.back() += c;
  }
  for (auto& f : out) f = trim(f);
  return out;
}

// Past this the microseconds, or the difference of two, may not fit in 64 bits.
constexpr Microseconds kMaxTimeUs = Microseconds{1} << 61;

int decimal_shift(TimeUnit unit) {
  switch (unit) {
    case TimeUnit::seconds: return 6;
    case TimeUnit::milliseconds: return 3;
    case TimeUnit::microseconds: return 0;
    case TimeUnit::nanoseconds: return -3;
  }
  return 0;
}

}  // namespace

std::optional<Microseconds> parse_decimal_time(const std::string& text, TimeUnit unit) {
  const char* p = text.c_str();
  const char* end = p + text.size();
  bool negative = false;
  if (p != end && (*p == '+' || *p == '-')) negative = *p++ == '-';
  std::uint64_t mantissa = 0;
  int digits = 0, exponent = 0;
  bool any = false, round_up = false;
  auto take = [&](char c, bool fraction) {
    any = true;
    if (digits < 18) {
      if (mantissa == 0 && c == '0') {  // leading zeros count for nothing
        if (fraction) --exponent;
        return;
      }
      mantissa = mantissa * 10 + static_cast<std::uint64_t>(c - '0');
      ++digits;
      if (fraction) --exponent;
    } else {
      if (!fraction) ++exponent;  // digits past 18 are dropped, rounding on the first
      if (digits == 18) round_up = c >= '5';
      ++digits;
    }
  };
  while (p != end && *p >= '0' && *p <= '9') take(*p++, false);
  if (p != end && *p == '.') {
    ++p;
    while (p != end && *p >= '0' && *p <= '9') take(*p++, true);
  }
  if (!any) return std::nullopt;
  if (p != end && (*p == 'e' || *p == 'E')) {
    ++p;
    bool eneg = false;
    if (p != end && (*p == '+' || *p == '-')) eneg = *p++ == '-';
    int e = 0;
    bool edigits = false;
    while (p != end && *p >= '0' && *p <= '9') {
      if (e < 10000) e = e * 10 + (*p - '0');
      ++p;
      edigits = true;
    }
    if (!edigits) return std::nullopt;
    exponent += eneg ? -e : e;
  }
  if (p != end) return std::nullopt;
  if (round_up) ++mantissa;
  exponent += decimal_shift(unit);
  std::uint64_t us = mantissa;
  if (exponent >= 0) {
    for (int i = 0; i < exponent && us != 0; ++i) {
      if (us > static_cast<std::uint64_t>(kMaxTimeUs) / 10) return std::nullopt;
      us *= 10;
    }
  } else {
    std::uint64_t divisor = 1;
    for (int i = 0; i < -exponent; ++i) {
      if (divisor > UINT64_MAX / 10) return Microseconds{0};  // smaller than half a microsecond
      divisor *= 10;
    }
    us = us / divisor + (us % divisor >= (divisor + 1) / 2 ? 1 : 0);  // half away from zero
  }
  if (us > static_cast<std::uint64_t>(kMaxTimeUs)) return std::nullopt;
  const auto v = static_cast<Microseconds>(us);
  return negative ? -v : v;
}

CellTable::CellTable(const std::string& path, char delimiter, std::vector<std::string> columns)
    : path_(path), columns_(std::move(columns)) {
  ByteSource source(path);
  std::string text;
  std::vector<char> buffer(1 << 16);
  for (std::size_t n; (n = source.read(buffer.data(), buffer.size())) > 0;) text.append(buffer.data(), n);
  if (text.rfind("\xFF\xFE", 0) == 0 || text.rfind("\xFE\xFF", 0) == 0) {
    throw InputError({path, 1, ""}, "the file is UTF-16 text (it starts with a UTF-16 byte-order mark); BIDS tables are UTF-8");
  }
  // A byte-order mark is no part of the first column's name or value (common practice, no source).
  if (text.rfind("\xEF\xBB\xBF", 0) == 0) text.erase(0, 3);
  if (text.find('\0') != std::string::npos) {
    throw InputError({path, 0, ""}, "holds a NUL byte: the file is damaged or not text");
  }
  const bool header_given = !columns_.empty();
  std::size_t line_no = 0, pos = 0;
  while (pos < text.size()) {
    const auto nl = text.find('\n', pos);
    std::string line = text.substr(pos, nl == std::string::npos ? std::string::npos : nl - pos);
    pos = nl == std::string::npos ? text.size() : nl + 1;
    ++line_no;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (trim(line).empty()) continue;
    auto fields = split(line, delimiter);
    if (columns_.empty()) {
      columns_ = std::move(fields);
      header_line_ = line_no;
      continue;
    }
    if (fields.size() != columns_.size()) {
      throw InputError({path, line_no, ""}, "expected " + std::to_string(columns_.size()) + " fields " +
                                                (header_given ? "(the sidecar's Columns)" : "as in the header") + ", found " +
                                                std::to_string(fields.size()));
    }
    cells_.push_back(std::move(fields));
    lines_.push_back(line_no);
  }
  if (columns_.empty()) throw InputError({path, 0, ""}, "the file is empty; expected a header line");
  // Column names MUST NOT be blank or repeated (BIDS v1.11.0, "Tabular files");
  // a blank name left by a trailing tab is harmless while its cells are empty.
  std::set<std::string> seen;
  for (std::size_t c = 0; c < columns_.size(); ++c) {
    const bool holds_values = std::any_of(cells_.begin(), cells_.end(), [&](const auto& r) { return !r[c].empty(); });
    if (columns_[c].empty()) {
      if (holds_values) {
        throw InputError({path, header_line_, ""}, "column " + std::to_string(c + 1) + " has no name but holds values");
      }
      continue;
    }
    if (!seen.insert(columns_[c]).second) {
      throw InputError({path, header_line_, columns_[c]}, "the column is named twice");
    }
  }
}

bool CellTable::has(const std::string& column) const {
  return !column.empty() && std::find(columns_.begin(), columns_.end(), column) != columns_.end();
}

const std::string& CellTable::text(std::size_t row, const std::string& column) const {
  static const std::string none;
  const auto it = std::find(columns_.begin(), columns_.end(), column);
  if (column.empty() || it == columns_.end()) return none;
  return cells_[row][static_cast<std::size_t>(it - columns_.begin())];
}

bool CellTable::missing(std::size_t row, const std::string& column, const std::vector<std::string>& also) const {
  const std::string& t = text(row, column);
  return t.empty() || t == "n/a" || std::find(also.begin(), also.end(), t) != also.end();
}

Microseconds CellTable::time(std::size_t row, const std::string& column, TimeUnit unit) const {
  const std::string& t = text(row, column);
  const auto v = parse_decimal_time(t, unit);
  if (!v) {
    if (t.find(',') != std::string::npos) {
      throw InputError({path_, lines_[row], column}, "expected a number with a decimal point, found '" + t +
                                                          "' (BIDS numbers use '.', never a decimal comma)");
    }
    throw InputError({path_, lines_[row], column}, "expected a time in " + to_string(unit) + ", found '" + t + "'");
  }
  return *v;
}

double CellTable::number(std::size_t row, const std::string& column, const std::string& expected) const {
  const std::string& t = text(row, column);
  const char* begin = t.c_str();
  char* end = nullptr;
  const double v = t.empty() ? 0.0 : std::strtod(begin, &end);
  if (t.empty() || end != begin + t.size() || !std::isfinite(v)) {
    const bool comma = t.find(',') != std::string::npos;
    throw InputError({path_, lines_[row], column}, "expected " + expected + ", found '" + t + "'" +
                                                        (comma ? " (a decimal comma? numbers are read with a decimal point)" : ""));
  }
  return v;
}

}  // namespace gazemill
