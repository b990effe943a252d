#include "alignment/stretch_corrector.h"

#include <cmath>

#include "alignment/grid_search.h"

namespace gazemill {

DriftParameters StretchCorrector::parameters() const {
  return {{"min_stretch", p_.min_stretch}, {"max_stretch", p_.max_stretch}, {"max_offset_line_heights", p_.max_offset_line_heights}};
}

DriftCorrector::Assignment StretchCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const auto& ly = input.text.line_y_px;
  const double y0 = ly.front();
  auto absolute_distance = [&](double k, double offset) {
    double sum = 0;
    for (const auto& f : fx) {
      const double y = y0 + k * (f.y_px - y0) + offset;
      sum += std::abs(y - ly[static_cast<std::size_t>(nearest_line(ly, y))]);
    }
    return sum;
  };
  const double max_offset = p_.max_offset_line_heights * input.text.line_height_px;
  const SearchResult best = minimise_on_grid(absolute_distance, {p_.min_stretch, p_.max_stretch, 20}, {-max_offset, max_offset, 20});
  std::vector<int> line;
  line.reserve(fx.size());
  for (const auto& f : fx) line.push_back(nearest_line(ly, y0 + best.a * (f.y_px - y0) + best.b));
  return {std::move(line), {{"stretch_factor", best.a}, {"stretch_offset_px", best.b}}};
}

}  // namespace gazemill
