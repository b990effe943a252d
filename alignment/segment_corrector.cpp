#include "alignment/segment_corrector.h"

#include <algorithm>
#include <numeric>

namespace gazemill {

DriftCorrector::Assignment SegmentCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const std::size_t n = fx.size(), m = input.text.line_count();
  // Saccade k leads from fixation k to k + 1; the most negative dx first, the
  // earlier saccade on equal length (our choice).
  std::vector<std::size_t> saccades(n > 0 ? n - 1 : 0);
  std::iota(saccades.begin(), saccades.end(), 0);
  std::stable_sort(saccades.begin(), saccades.end(),
                   [&](std::size_t a, std::size_t b) { return fx[a + 1].x_px - fx[a].x_px < fx[b + 1].x_px - fx[b].x_px; });
  saccades.resize(std::min(saccades.size(), m - 1));
  std::vector<bool> sweep(n, false);  // sweep[i]: a return sweep lands on fixation i
  for (std::size_t k : saccades) sweep[k + 1] = true;
  std::vector<int> line(n);
  int current = 0;
  for (std::size_t i = 0; i < n; ++i) {
    if (sweep[i]) ++current;
    line[i] = current;
  }
  return {std::move(line), {}};
}

}  // namespace gazemill
