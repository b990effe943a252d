#pragma once
// Minimising a function of two bounded parameters whose surface has many
// local minima (regress and stretch: every fixation's distance to its nearest
// line jumps where the nearest line changes). A grid finds the basins, a
// pattern search refines the best few; no randomness, so a trial always gets
// the same answer.

#include <functional>

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
SearchResult minimise_on_grid(const std::function<double(double, double)>& f, SearchRange a, SearchRange b, int starts = 3);

}  // namespace gazemill
