#pragma once
// Dynamic time warping (Sakoe & Chiba 1978, common practice): the cheapest
// monotone alignment of two sequences that pairs their first and their last
// elements, each step advancing one sequence or both. warp aligns fixations
// with word centres; compare aligns a run of fixations with one line's words.

#include <cstddef>
#include <functional>
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
WarpingPath dynamic_time_warping(std::size_t n, std::size_t m, const std::function<double(std::size_t, std::size_t)>& local_cost,
                                 bool want_path);

}  // namespace gazemill
