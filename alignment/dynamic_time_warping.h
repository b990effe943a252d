#pragma once
// Dynamic time warping (Sakoe & Chiba 1978, common practice): the cheapest
// monotone alignment of two sequences that pairs their first and their last
// elements, each step advancing one sequence or both. warp aligns fixations
// with word centres; compare aligns a run of fixations with one line's words.

#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <limits>
#include <stdexcept>
#include <utility>
#include <vector>

namespace gazemill {

struct WarpingPath {
  double cost = 0;                                         // sum of the local costs along the path
  std::vector<std::pair<std::size_t, std::size_t>> steps;  // (i, j) from (0, 0) to (n-1, m-1); empty unless asked for
};

/// Aligns a sequence of n elements with one of m (both at least 1), with
/// local_cost(i, j) >= 0. O(n*m) time; O(n*m) bytes of memory for the path
/// (one step code per cell) and O(m) doubles for the costs. Among equally
/// cheap predecessors a cell takes the diagonal, then (i-1, j), then (i, j-1)
/// (our choice), so results are deterministic.
///
/// A template so that the local cost, called n*m times, is inlined; the
/// std::function overload below gives the same answers.
template <class Cost>
WarpingPath dynamic_time_warping(std::size_t n, std::size_t m, const Cost& local_cost, bool want_path);

WarpingPath dynamic_time_warping(std::size_t n, std::size_t m, const std::function<double(std::size_t, std::size_t)>& local_cost,
                                 bool want_path);

template <class Cost>
WarpingPath dynamic_time_warping(std::size_t n, std::size_t m, const Cost& local_cost, bool want_path) {
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
