#include "pipeline/named_regex.h"

#include <algorithm>
#include <stdexcept>

namespace gazemill {
namespace {

bool is_name_char(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_';
}

}  // namespace

NamedRegex::NamedRegex(const std::string& pattern) : pattern_(pattern) {
  // Rewrite (?<name>...) to (...) and remember which group number got which name.
  std::string plain;
  plain.reserve(pattern.size());
  std::size_t group = 0;
  bool in_class = false;
  for (std::size_t i = 0; i < pattern.size(); ++i) {
    const char c = pattern[i];
    if (c == '\\') {
      plain += c;
      if (i + 1 < pattern.size()) plain += pattern[++i];
      continue;
    }
    if (in_class) {
      if (c == ']') in_class = false;
      plain += c;
      continue;
    }
    if (c == '[') {
      in_class = true;
      plain += c;
      continue;
    }
    if (c == '(') {
      if (i + 1 < pattern.size() && pattern[i + 1] == '?') {
        if (i + 2 < pattern.size() && pattern[i + 2] == '<') {
          std::size_t j = i + 3;
          while (j < pattern.size() && is_name_char(pattern[j])) ++j;
          if (j == i + 3 || j >= pattern.size() || pattern[j] != '>') {
            throw std::invalid_argument("a named group must look like (?<name>...) at offset " +
                                        std::to_string(i));
          }
          ++group;
          std::string name = pattern.substr(i + 3, j - i - 3);
          groups_.emplace_back(group, name);
          if (std::find(names_.begin(), names_.end(), name) == names_.end()) names_.push_back(name);
          plain += '(';
          i = j;
          continue;
        }
        // (?: (?= (?! are not capturing.
      } else {
        ++group;
      }
    }
    plain += c;
  }
  try {
    regex_ = std::regex(plain, std::regex::ECMAScript);
  } catch (const std::regex_error& e) {
    throw std::invalid_argument(std::string("not a valid regular expression: ") + e.what());
  }
}

bool NamedRegex::has_name(const std::string& name) const {
  return std::find(names_.begin(), names_.end(), name) != names_.end();
}

std::optional<std::map<std::string, std::string>> NamedRegex::search(std::string_view text) const {
  std::match_results<std::string_view::const_iterator> m;
  if (!std::regex_search(text.begin(), text.end(), m, regex_)) return std::nullopt;
  std::map<std::string, std::string> out;
  for (const auto& [index, name] : groups_) {
    if (index < m.size() && m[index].matched) out[name] = m[index].str();
  }
  return out;
}

}  // namespace gazemill
