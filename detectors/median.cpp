#include "detectors/median.h"

#include <algorithm>
#include <cmath>

namespace gazemill {

double median_in_place(std::vector<double>& v) {
  if (v.empty()) return std::nan("");
  const std::size_t m = v.size() / 2;
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(m), v.end());
  if (v.size() % 2) return v[m];
  const double hi = v[m];
  // After nth_element everything before m is <= v[m]: the lower middle is their maximum.
  return 0.5 * (hi + *std::max_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(m)));
}

}  // namespace gazemill
