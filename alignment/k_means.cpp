#include "alignment/k_means.h"

#include <algorithm>
#include <cstddef>
#include <limits>
#include <numeric>

namespace gazemill {
namespace {

// Sum of squared distances to the mean of sorted values [a, b] (inclusive),
// from prefix sums.
struct RunCost {
  std::vector<double> s1, s2;
  explicit RunCost(const std::vector<double>& sorted) : s1(sorted.size() + 1, 0.0), s2(sorted.size() + 1, 0.0) {
    // Centring first keeps the prefix sums small, so their differences stay exact enough.
    const double mean = sorted.empty() ? 0.0 : std::accumulate(sorted.begin(), sorted.end(), 0.0) / static_cast<double>(sorted.size());
    for (std::size_t i = 0; i < sorted.size(); ++i) {
      const double v = sorted[i] - mean;
      s1[i + 1] = s1[i] + v;
      s2[i + 1] = s2[i] + v * v;
    }
  }
  double operator()(std::size_t a, std::size_t b) const {
    const double n = static_cast<double>(b - a + 1);
    const double sum = s1[b + 1] - s1[a];
    return std::max(0.0, (s2[b + 1] - s2[a]) - sum * sum / n);
  }
};

// One row of the dynamic programme: cost[i] = min over j <= i of prev[j-1] + run(j, i),
// where the best j never decreases with i, so divide and conquer finds all of
// them in O(n log n).
void fill_row(const RunCost& run, const std::vector<double>& prev, std::vector<double>& cost, std::vector<std::size_t>& arg,
              std::size_t lo, std::size_t hi, std::size_t opt_lo, std::size_t opt_hi, std::size_t group) {
  if (lo > hi) return;
  const std::size_t mid = lo + (hi - lo) / 2;
  double best = std::numeric_limits<double>::infinity();
  std::size_t best_j = std::max(opt_lo, group);
  for (std::size_t j = std::max(opt_lo, group); j <= std::min(mid, opt_hi); ++j) {
    const double c = prev[j - 1] + run(j, mid);
    if (c < best) {
      best = c;
      best_j = j;
    }
  }
  cost[mid] = best;
  arg[mid] = best_j;
  if (mid > lo) fill_row(run, prev, cost, arg, lo, mid - 1, opt_lo, best_j, group);
  fill_row(run, prev, cost, arg, mid + 1, hi, best_j, opt_hi, group);
}

}  // namespace

std::vector<int> k_means_1d(const std::vector<double>& values, int k) {
  const std::size_t n = values.size();
  std::vector<int> out(n, 0);
  if (n == 0 || k <= 1) return out;
  const std::size_t groups = std::min<std::size_t>(static_cast<std::size_t>(k), n);
  std::vector<std::size_t> order(n);
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return values[a] < values[b]; });
  std::vector<double> sorted(n);
  for (std::size_t i = 0; i < n; ++i) sorted[i] = values[order[i]];
  const RunCost run(sorted);

  // cost[g][i]: best cost of the first i+1 sorted values in g+1 groups; start[g][i]: where group g begins.
  std::vector<std::vector<double>> cost(groups, std::vector<double>(n, std::numeric_limits<double>::infinity()));
  std::vector<std::vector<std::size_t>> start(groups, std::vector<std::size_t>(n, 0));
  for (std::size_t i = 0; i < n; ++i) cost[0][i] = run(0, i);
  for (std::size_t g = 1; g < groups; ++g) fill_row(run, cost[g - 1], cost[g], start[g], g, n - 1, g, n - 1, g);

  std::size_t end = n - 1;
  for (std::size_t g = groups; g-- > 0;) {
    const std::size_t begin = g == 0 ? 0 : start[g][end];
    for (std::size_t i = begin; i <= end; ++i) out[order[i]] = static_cast<int>(g);
    if (g > 0) end = begin - 1;
  }
  return out;
}

std::vector<int> two_means_2d(const std::vector<std::array<double, 2>>& points) {
  const std::size_t n = points.size();
  std::vector<int> group(n, 1);
  if (n < 2) return group;
  std::size_t lo = 0, hi = 0;
  for (std::size_t i = 1; i < n; ++i) {
    if (points[i][0] < points[lo][0]) lo = i;
    if (points[i][0] > points[hi][0]) hi = i;
  }
  std::array<std::array<double, 2>, 2> centre{points[lo], points[hi]};
  if (centre[0] == centre[1]) return group;
  auto d2 = [](const std::array<double, 2>& a, const std::array<double, 2>& b) {
    return (a[0] - b[0]) * (a[0] - b[0]) + (a[1] - b[1]) * (a[1] - b[1]);
  };
  // Lloyd's iterations converge in a handful of steps; the cap only guards against cycling on ties.
  for (int iteration = 0; iteration < 100; ++iteration) {
    bool changed = iteration == 0;
    for (std::size_t i = 0; i < n; ++i) {
      const int g = d2(points[i], centre[0]) <= d2(points[i], centre[1]) ? 0 : 1;
      if (g != group[i]) {
        group[i] = g;
        changed = true;
      }
    }
    if (!changed) break;
    std::array<std::array<double, 2>, 2> sum{};
    std::array<double, 2> count{};
    for (std::size_t i = 0; i < n; ++i) {
      const auto g = static_cast<std::size_t>(group[i]);
      sum[g][0] += points[i][0];
      sum[g][1] += points[i][1];
      count[g] += 1;
    }
    for (std::size_t g = 0; g < 2; ++g) {
      if (count[g] > 0) centre[g] = {sum[g][0] / count[g], sum[g][1] / count[g]};
    }
  }
  return group;
}

}  // namespace gazemill
