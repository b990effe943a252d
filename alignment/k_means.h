#pragma once
// k-means for the two methods that cluster: cluster (fixation y values into
// as many groups as there are lines) and split (saccade vectors into return
// sweeps and the rest).

#include <array>
#include <vector>

namespace gazemill {

/// Optimal k-means of one-dimensional values (least total squared distance to
/// the group means), by dynamic programming over the sorted values (Wang &
/// Song 2011, The R Journal 3(2), "Ckmeans.1d.dp", from memory): in one
/// dimension the optimal groups are runs of the sorted values, so the answer
/// is exact and needs no random starts. Returns a group per value, numbered
/// 0..k-1 from the smallest values up. k is reduced to the number of values
/// when there are fewer; equal values may still end in different groups only
/// if that lowers no cost (never, in practice).
std::vector<int> k_means_1d(const std::vector<double>& values, int k);

/// Two-means of points in the plane by Lloyd's iterations (Lloyd 1982, common
/// practice), started deterministically from the point with the smallest and
/// the point with the largest first coordinate (our choice; Carr et al. used
/// random starts, from memory). Returns 0 or 1 per point; group 0 is the one
/// started from the smallest first coordinate. Fewer than two distinct points:
/// every point in group 1.
std::vector<int> two_means_2d(const std::vector<std::array<double, 2>>& points);

}  // namespace gazemill
