#pragma once
// The median of a sample, shared by the robust estimates of the detectors.

#include <vector>

namespace gazemill {

/// Median of `values` (reordered in place); NaN for an empty sample.
double median_in_place(std::vector<double>& values);

}  // namespace gazemill
