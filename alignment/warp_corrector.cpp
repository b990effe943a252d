#include "alignment/warp_corrector.h"

#include <cmath>
#include <stdexcept>

#include "alignment/dynamic_time_warping.h"

namespace gazemill {

DriftCorrector::Assignment WarpCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const auto& text = input.text;
  std::vector<double> word_x, word_y;
  std::vector<int> word_line;
  for (std::size_t l = 0; l < text.line_count(); ++l) {
    for (double x : text.word_x_px[l]) {
      word_x.push_back(x);
      word_y.push_back(text.line_y_px[l]);
      word_line.push_back(static_cast<int>(l));
    }
  }
  if (word_x.empty()) throw std::invalid_argument("warp needs the word centres of the text's lines");
  const double* wx = word_x.data();
  const double* wy = word_y.data();
  const DriftFixation* f = fx.data();
  const WarpingPath path = dynamic_time_warping(
      fx.size(), word_x.size(), [&](std::size_t i, std::size_t j) { return std::hypot(f[i].x_px - wx[j], f[i].y_px - wy[j]); }, true);

  // The path visits each fixation's words as one contiguous run, and along it
  // lines never decrease, so the most frequent line is found in one pass.
  std::vector<int> line(fx.size(), 0);
  std::size_t k = 0;
  while (k < path.steps.size()) {
    const std::size_t i = path.steps[k].first;
    int best_line = -1, best_count = 0, run_line = -1, run_count = 0;
    for (; k < path.steps.size() && path.steps[k].first == i; ++k) {
      const int l = word_line[path.steps[k].second];
      run_count = l == run_line ? run_count + 1 : 1;
      run_line = l;
      if (run_count > best_count) {  // strictly more: the earlier line keeps a tie
        best_count = run_count;
        best_line = l;
      }
    }
    line[i] = best_line;
  }
  return {std::move(line), {{"dtw_mean_cost_px", path.cost / static_cast<double>(path.steps.size())}}};
}

}  // namespace gazemill
