#pragma once
// Minimising a function of two bounded parameters whose surface has many
// local minima (regress and stretch: every fixation's distance to its nearest
// line jumps where the nearest line changes). A grid finds the basins, a
// pattern search refines the best few; no randomness, so a trial always gets
// the same answer.

#include <algorithm>
#include <array>
#include <cmath>
#include <cstddef>
#include <functional>
#include <vector>

namespace gazemill {

struct SearchRange {
  double low = 0;
  double high = 0;
  int steps = 1;  // grid intervals; steps + 1 grid values from low to high
};

struct SearchResult {
  double a = 0;
  double b = 0;
  double value = 0;
};

/// Evaluates f on the grid of `a` x `b`, then refines the `starts` best grid
/// points by compass search (step halved when no neighbour improves, down to
/// 1/64 of a grid interval), never leaving the ranges. Ties keep the earlier
/// point (a then b, in increasing order). Our choice of optimiser; Carr et
/// al. (2022) used a general bounded minimiser (from memory).
///
/// A template so that the objective, called some 500 times per trial, is
/// inlined; the std::function overload below gives the same answers. When f
/// also has f.row(a, b_values, count, values), that evaluates a whole grid
/// row at once: values[k] must be f(a, b_values[k]), bit for bit.
template <class F>
SearchResult minimise_on_grid(const F& f, SearchRange a, SearchRange b, int starts = 3);

SearchResult minimise_on_grid(const std::function<double(double, double)>& f, SearchRange a, SearchRange b, int starts = 3);

namespace grid_search_detail {

// The `k` first grid points in the order of a stable sort by value: the
// smallest values, ties in grid order. Returns false (and leaves `best`
// unspecified) when a value is NaN, which the caller then sorts as before.
inline bool stable_smallest(const std::vector<SearchResult>& grid, std::size_t k, std::vector<SearchResult>& best) {
  best.clear();
  best.reserve(k + 1);
  for (const SearchResult& r : grid) {
    if (std::isnan(r.value)) return false;
    if (best.size() == k && !(r.value < best.back().value)) continue;
    // After every kept point of no larger value: those came earlier in the grid.
    auto pos = std::upper_bound(best.begin(), best.end(), r, [](const SearchResult& x, const SearchResult& y) { return x.value < y.value; });
    best.insert(pos, r);
    if (best.size() > k) best.pop_back();
  }
  return true;
}

}  // namespace grid_search_detail

template <class F>
SearchResult minimise_on_grid(const F& f, SearchRange a, SearchRange b, int starts) {
  const int na = std::max(1, a.steps), nb = std::max(1, b.steps);
  const double da = (a.high - a.low) / na, db = (b.high - b.low) / nb;
  std::vector<SearchResult> grid;
  grid.reserve(static_cast<std::size_t>((na + 1) * (nb + 1)));
  if constexpr (requires(const double* bs, double* vs) { f.row(0.0, bs, std::size_t{1}, vs); }) {
    std::vector<double> pbs, values(static_cast<std::size_t>(nb + 1));
    for (int j = 0; j <= nb; ++j) pbs.push_back(b.low + db * j);
    for (int i = 0; i <= na; ++i) {
      const double pa = a.low + da * i;
      f.row(pa, pbs.data(), pbs.size(), values.data());
      for (std::size_t j = 0; j < pbs.size(); ++j) grid.push_back({pa, pbs[j], values[j]});
    }
  } else {
    for (int i = 0; i <= na; ++i) {
      for (int j = 0; j <= nb; ++j) {
        const double pa = a.low + da * i, pb = b.low + db * j;
        grid.push_back({pa, pb, f(pa, pb)});
      }
    }
  }
  const std::size_t n_starts = static_cast<std::size_t>(std::min<int>(std::max(1, starts), static_cast<int>(grid.size())));
  // Only the n_starts first points of the stable sort by value are used; with
  // no NaN among the values, "<" orders them strictly weakly and those points
  // are the smallest values, ties in grid order.
  std::vector<SearchResult> first;
  if (!grid_search_detail::stable_smallest(grid, n_starts, first)) {
    std::stable_sort(grid.begin(), grid.end(), [](const SearchResult& x, const SearchResult& y) { return x.value < y.value; });
    first.assign(grid.begin(), grid.begin() + static_cast<std::ptrdiff_t>(n_starts));
  }
  SearchResult best = first.front();
  for (std::size_t s = 0; s < n_starts; ++s) {
    SearchResult cur = first[s];
    double sa = da / 2, sb = db / 2;
    while (sa > da / 64 || sb > db / 64) {
      bool moved = false;
      const std::array<std::array<double, 2>, 4> moves{{{sa, 0}, {-sa, 0}, {0, sb}, {0, -sb}}};
      for (const auto& mv : moves) {
        const double pa = std::clamp(cur.a + mv[0], std::min(a.low, a.high), std::max(a.low, a.high));
        const double pb = std::clamp(cur.b + mv[1], std::min(b.low, b.high), std::max(b.low, b.high));
        const double v = f(pa, pb);
        if (v < cur.value) {
          cur = {pa, pb, v};
          moved = true;
          break;
        }
      }
      if (!moved) {
        sa /= 2;
        sb /= 2;
      }
    }
    if (cur.value < best.value) best = cur;
  }
  return best;
}

}  // namespace gazemill
