#pragma once
// A regular expression with named captures, (?<name>...), on top of
// std::regex (ECMAScript), which numbers groups but cannot name them.

#include <map>
#include <optional>
#include <regex>
#include <string>
#include <string_view>
#include <vector>

namespace gazemill {

class NamedRegex {
 public:
  /// Throws std::invalid_argument with a readable reason on a bad pattern,
  /// including one over 1000 characters or with a count of over four digits.
  explicit NamedRegex(const std::string& pattern);

  /// Named captures of the first match anywhere in text, or nullopt.
  /// Unmatched optional groups are absent from the map. Throws
  /// std::length_error for a text too long to match safely (some hundred
  /// thousand characters, fewer for deeply nested patterns).
  std::optional<std::map<std::string, std::string>> search(std::string_view text) const;

  const std::string& pattern() const { return pattern_; }
  const std::vector<std::string>& names() const { return names_; }

 private:
  std::string pattern_;
  std::regex regex_;
  std::vector<std::string> names_;           // distinct names
  std::vector<std::pair<std::size_t, std::string>> groups_;  // group index -> name
  std::size_t nesting_ = 0;  // groups and quantifiers: a bound on how deep matching recurses
};

}  // namespace gazemill
