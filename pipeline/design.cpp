#include "pipeline/design.h"

namespace gazemill {

namespace {
constexpr char kSeparator = '\x1f';  // the ASCII unit separator: in no text a trial variable is captured from
}

std::vector<std::string> design_levels(const DesignSpec& design, const std::map<std::string, std::string>& variables) {
  std::vector<std::string> levels;
  for (const auto& f : design.factors) {
    const auto it = variables.find(f);
    levels.push_back(it == variables.end() ? std::string() : it->second);
  }
  return levels;
}

std::string cell_key(const std::vector<std::string>& levels) {
  std::string key(1, kSeparator);
  for (std::size_t i = 0; i < levels.size(); ++i) key += (i ? std::string(1, kSeparator) : std::string()) + levels[i];
  return key;
}

std::vector<std::string> cell_levels(const std::string& key) {
  std::vector<std::string> out;
  if (key.size() <= 1) return out;
  std::size_t start = 1;
  for (;;) {
    const auto sep = key.find(kSeparator, start);
    out.push_back(key.substr(start, sep == std::string::npos ? std::string::npos : sep - start));
    if (sep == std::string::npos) break;
    start = sep + 1;
  }
  return out;
}

std::string cell_text(const std::vector<std::string>& factors, const std::string& key) {
  const auto levels = cell_levels(key);
  if (factors.empty()) return "all trials";
  std::string out;
  for (std::size_t i = 0; i < factors.size(); ++i) {
    out += (i ? ", " : "") + factors[i] + "=" + (i < levels.size() && !levels[i].empty() ? levels[i] : std::string("NA"));
  }
  return out;
}

}  // namespace gazemill
