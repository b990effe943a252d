#include "alignment/cluster_corrector.h"

#include "alignment/k_means.h"

namespace gazemill {

DriftCorrector::Assignment ClusterCorrector::assign(const DriftInput& input) const {
  std::vector<double> y;
  y.reserve(input.fixations.size());
  for (const auto& f : input.fixations) y.push_back(f.y_px);
  // k_means_1d numbers its groups by increasing value, which is the line order.
  return {k_means_1d(y, static_cast<int>(input.text.line_count())), {}};
}

}  // namespace gazemill
