#include "pipeline/rare_values.h"

#include <algorithm>

namespace gazemill {

std::vector<std::string> rare_values(const std::map<std::string, std::size_t>& counts) {
  std::size_t most = 0;
  for (const auto& [value, n] : counts) most = std::max(most, n);
  std::vector<std::string> rare;
  for (const auto& [value, n] : counts) {
    if (10 * n < most) rare.push_back(value);
  }
  return rare;
}

std::string count_listing(const std::map<std::string, std::size_t>& counts) {
  std::string out;
  for (const auto& [value, n] : counts) out += (out.empty() ? "" : ", ") + value + ": " + std::to_string(n);
  return out;
}

}  // namespace gazemill
