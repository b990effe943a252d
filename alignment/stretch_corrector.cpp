#include "alignment/stretch_corrector.h"

#include <cmath>
#include <vector>

#include "alignment/grid_search.h"

namespace gazemill {
namespace {

// The sum of absolute distances from each fixation, stretched by k about the
// first line and moved by offset, to its nearest line. Out of line on
// purpose: inlined into the grid search, the compiler kept the sum in memory.
[[gnu::noinline]] double absolute_distance_sum(const std::vector<double>& fv, const std::vector<double>& ly, const NearestLine& nearest,
                                               double y0, double k, double offset) {
  double sum = 0;
  for (const double v : fv) {
    const double y = y0 + k * v + offset;
    sum += std::abs(y - ly[static_cast<std::size_t>(nearest(y))]);
  }
  return sum;
}

}  // namespace

DriftParameters StretchCorrector::parameters() const {
  return {{"min_stretch", p_.min_stretch}, {"max_stretch", p_.max_stretch}, {"max_offset_line_heights", p_.max_offset_line_heights}};
}

DriftCorrector::Assignment StretchCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const auto& ly = input.text.line_y_px;
  const double y0 = ly.front();
  // Each fixation's y from the first line does not depend on the fitted
  // values: computed once, then the same expression per fixation.
  std::vector<double> fv;
  fv.reserve(fx.size());
  for (const auto& f : fx) fv.push_back(f.y_px - y0);
  const NearestLine nearest(ly);
  auto absolute_distance = [&](double k, double offset) { return absolute_distance_sum(fv, ly, nearest, y0, k, offset); };
  const double max_offset = p_.max_offset_line_heights * input.text.line_height_px;
  const SearchResult best = minimise_on_grid(absolute_distance, {p_.min_stretch, p_.max_stretch, 20}, {-max_offset, max_offset, 20});
  std::vector<int> line;
  line.reserve(fx.size());
  for (const auto& f : fx) line.push_back(nearest_line(ly, y0 + best.a * (f.y_px - y0) + best.b));
  return {std::move(line), {{"stretch_factor", best.a}, {"stretch_offset_px", best.b}}};
}

}  // namespace gazemill
