#include "alignment/regress_corrector.h"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <vector>

#include "alignment/grid_search.h"

namespace gazemill {
namespace {

// The sum of squared distances from each fixation, moved by slope and
// offset, to its nearest line, from base[i] = y_i - slope * (x_i - x0).
// Out of line on purpose: inlined into the grid search, the compiler kept
// the sum in memory, which made it slower.
[[gnu::noinline]] double squared_distance_sum(const std::vector<double>& base, const std::vector<double>& ly, const NearestLine& nearest,
                                              double offset) {
  double sum = 0;
  for (const double b : base) {
    const double y = b - offset;
    const double d = y - ly[static_cast<std::size_t>(nearest(y))];
    sum += d * d;
  }
  return sum;
}

}  // namespace

DriftParameters RegressCorrector::parameters() const {
  return {{"max_slope", p_.max_slope},
          {"max_offset_line_heights", p_.max_offset_line_heights},
          {"min_sd_px", p_.min_sd_px},
          {"max_sd_px", p_.max_sd_px}};
}

DriftCorrector::Assignment RegressCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const auto& ly = input.text.line_y_px;
  const double x0 = word_span(input.text).left_px;
  // The most likely line for a fixation is the nearest fitted line whatever the
  // shared SD, and the log-likelihood with the best SD (clamped to its bounds)
  // falls as the sum of squared distances to those lines rises. So maximising
  // the likelihood over slope and offset is minimising that sum.
  // Each fixation's x from the leftmost word centre does not depend on the
  // fitted values: computed once. The grid visits 21 offsets per slope, so
  // y - slope * (x - x0) is kept for the last slope asked. The sum is the
  // same expression, in the same order, as written per fixation.
  std::vector<double> fy, fu, base(fx.size());
  fy.reserve(fx.size());
  fu.reserve(fx.size());
  for (const auto& f : fx) {
    fy.push_back(f.y_px);
    fu.push_back(f.x_px - x0);
  }
  double base_slope = 0;
  bool have_base = false;
  const NearestLine nearest(ly);
  auto squared_distance = [&](double slope, double offset) {
    // Bitwise the same slope (so 0 and -0 differ): the same products.
    if (!have_base || std::memcmp(&slope, &base_slope, sizeof slope) != 0) {
      for (std::size_t i = 0; i < fy.size(); ++i) base[i] = fy[i] - slope * fu[i];
      base_slope = slope;
      have_base = true;
    }
    return squared_distance_sum(base, ly, nearest, offset);
  };
  const double max_offset = p_.max_offset_line_heights * input.text.line_height_px;
  const SearchResult best = minimise_on_grid(squared_distance, {-p_.max_slope, p_.max_slope, 20}, {-max_offset, max_offset, 20});
  std::vector<int> line;
  line.reserve(fx.size());
  for (const auto& f : fx) line.push_back(nearest_line(ly, f.y_px - best.a * (f.x_px - x0) - best.b));
  const double sd = std::clamp(std::sqrt(best.value / static_cast<double>(fx.size())), p_.min_sd_px, p_.max_sd_px);
  return {std::move(line), {{"model_slope", best.a}, {"model_offset_px", best.b}, {"model_sd_px", sd}}};
}

}  // namespace gazemill
