#include "detectors/timestamp_gaps.h"

namespace gazemill {

std::vector<bool> gap_steps(const GazeTrace& g, double max_gap_factor) {
  const std::size_t n = g.size();
  std::vector<bool> gap(n, false);
  for (std::size_t i = 1; i < n; ++i) gap[i] = is_gap_step(g.time_us.data(), n, i, g.interval_us, max_gap_factor);
  return gap;
}

}  // namespace gazemill
