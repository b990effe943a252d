#include "alignment/chain_corrector.h"

#include <cmath>

namespace gazemill {

DriftParameters ChainCorrector::parameters() const {
  return {{"x_threshold_font_heights", p_.x_threshold_font_heights}, {"y_threshold_font_heights", p_.y_threshold_font_heights}};
}

DriftCorrector::Assignment ChainCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const double x_threshold = p_.x_threshold_font_heights * input.text.font_height_px;
  const double y_threshold = p_.y_threshold_font_heights * input.text.font_height_px;
  std::vector<int> line(fx.size());
  std::size_t begin = 0;
  double chains = 0;
  auto close_chain = [&](std::size_t end) {  // [begin, end)
    double sum = 0;
    for (std::size_t i = begin; i < end; ++i) sum += fx[i].y_px;
    const int l = nearest_line(input.text.line_y_px, sum / static_cast<double>(end - begin));
    for (std::size_t i = begin; i < end; ++i) line[i] = l;
    chains += 1;
  };
  for (std::size_t i = 1; i < fx.size(); ++i) {
    if (std::abs(fx[i].x_px - fx[i - 1].x_px) > x_threshold || std::abs(fx[i].y_px - fx[i - 1].y_px) > y_threshold) {
      close_chain(i);
      begin = i;
    }
  }
  close_chain(fx.size());
  return {std::move(line), {{"chain_count", chains}}};
}

}  // namespace gazemill
