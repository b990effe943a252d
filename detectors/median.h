#pragma once
// The median of a sample, shared by the robust estimates of the detectors.

#include <vector>

namespace gazemill {

/// The two middle values of a sample in sorted order (equal for an odd count).
struct MiddlePair {
  double lower = 0.0;
  double upper = 0.0;
};

/// The middle pair of `values` (reordered in place; must not be empty).
MiddlePair middle_pair_in_place(std::vector<double>& values);

/// Median of `values` (reordered in place); NaN for an empty sample.
double median_in_place(std::vector<double>& values);

}  // namespace gazemill
