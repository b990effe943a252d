#include "pipeline/edit_distance.h"

#include <algorithm>
#include <vector>

namespace gazemill {

std::size_t edit_distance(const std::string& a, const std::string& b) {
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diagonal = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t up = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diagonal + (a[i - 1] == b[j - 1] ? 0 : 1)});
      diagonal = up;
    }
  }
  return row[b.size()];
}

std::string likely_meant(const std::string& word, const std::vector<std::string>& names) {
  std::string nearest;
  std::size_t best = 3;  // at most two edits away
  for (const auto& name : names) {
    if (name == word) continue;
    if (name.rfind(word + "_", 0) == 0 && name.find('_', word.size() + 1) == std::string::npos) return name;  // its unit left off
    const std::size_t d = edit_distance(word, name);
    if (d < best) {
      best = d;
      nearest = name;
    }
  }
  return nearest;
}

}  // namespace gazemill
