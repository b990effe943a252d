#include "alignment/dynamic_time_warping.h"

#include <algorithm>
#include <cstdint>
#include <limits>
#include <stdexcept>

namespace gazemill {

WarpingPath dynamic_time_warping(std::size_t n, std::size_t m, const std::function<double(std::size_t, std::size_t)>& local_cost,
                                 bool want_path) {
  if (n == 0 || m == 0) throw std::invalid_argument("dynamic time warping needs two sequences of at least one element");
  enum : std::uint8_t { kDiagonal = 0, kUp = 1, kLeft = 2 };  // from (i-1, j-1), (i-1, j), (i, j-1)
  std::vector<std::uint8_t> from(want_path ? n * m : 0);
  const double inf = std::numeric_limits<double>::infinity();
  std::vector<double> prev(m, inf), cur(m, inf);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < m; ++j) {
      const double c = local_cost(i, j);
      double best = 0;
      std::uint8_t step = kDiagonal;
      if (i == 0 && j == 0) {
        best = 0;
      } else {
        const double diagonal = (i > 0 && j > 0) ? prev[j - 1] : inf;
        const double up = i > 0 ? prev[j] : inf;
        const double left = j > 0 ? cur[j - 1] : inf;
        best = diagonal;
        if (up < best) {
          best = up;
          step = kUp;
        }
        if (left < best) {
          best = left;
          step = kLeft;
        }
      }
      cur[j] = best + c;
      if (want_path) from[i * m + j] = step;
    }
    std::swap(prev, cur);
  }
  WarpingPath out;
  out.cost = prev[m - 1];
  if (want_path) {
    std::size_t i = n - 1, j = m - 1;
    out.steps.emplace_back(i, j);
    while (i > 0 || j > 0) {
      switch (from[i * m + j]) {
        case kDiagonal: --i, --j; break;
        case kUp: --i; break;
        default: --j; break;
      }
      out.steps.emplace_back(i, j);
    }
    std::reverse(out.steps.begin(), out.steps.end());
  }
  return out;
}

}  // namespace gazemill
