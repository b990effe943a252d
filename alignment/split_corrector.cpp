#include "alignment/split_corrector.h"

#include <array>

#include "alignment/k_means.h"

namespace gazemill {

DriftCorrector::Assignment SplitCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const std::size_t n = fx.size();
  std::vector<std::array<double, 2>> saccades;
  for (std::size_t i = 1; i < n; ++i) saccades.push_back({fx[i].x_px - fx[i - 1].x_px, fx[i].y_px - fx[i - 1].y_px});
  // Group 0 grew from the most leftward saccade: the return sweeps.
  std::vector<int> group = two_means_2d(saccades);
  // Two-means always finds two groups; when even the "sweeps" move rightwards
  // on average (one line read, say) there are none (our choice).
  double sweep_dx = 0, sweep_count = 0;
  for (std::size_t k = 0; k < group.size(); ++k) {
    if (group[k] == 0) {
      sweep_dx += saccades[k][0];
      sweep_count += 1;
    }
  }
  if (sweep_count == 0 || sweep_dx >= 0) group.assign(group.size(), 1);
  std::vector<int> line(n);
  std::size_t begin = 0;
  double sweeps = 0;
  auto close_piece = [&](std::size_t end) {
    double sum = 0;
    for (std::size_t i = begin; i < end; ++i) sum += fx[i].y_px;
    const int l = nearest_line(input.text.line_y_px, sum / static_cast<double>(end - begin));
    for (std::size_t i = begin; i < end; ++i) line[i] = l;
  };
  for (std::size_t k = 0; k < group.size(); ++k) {
    if (group[k] == 0) {
      close_piece(k + 1);
      begin = k + 1;
      sweeps += 1;
    }
  }
  close_piece(n);
  return {std::move(line), {{"return_sweep_count", sweeps}}};
}

}  // namespace gazemill
