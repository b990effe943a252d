#include "alignment/stretch_corrector.h"

#include <cmath>
#include <cstring>
#include <vector>

#include "alignment/grid_search.h"

namespace gazemill {
namespace {

// The sum of absolute distances from each fixation, stretched by k about the
// first line and moved by offset, to its nearest line, from
// base[i] = y0 + k * (y_i - y0). Out of line on purpose: inlined into the
// grid search, the compiler kept the sum in memory.
[[gnu::noinline]] double absolute_distance_sum(const std::vector<double>& base, const std::vector<double>& ly, const NearestLine& nearest,
                                               double offset) {
  double sum = 0;
  for (const double b : base) {
    const double y = b + offset;
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
  // values: computed once. The grid visits 21 offsets per stretch, so
  // y0 + k * (y - y0) is kept for the last k asked. The sum is the same
  // expression, in the same order, as written per fixation.
  std::vector<double> fv, base(fx.size());
  fv.reserve(fx.size());
  for (const auto& f : fx) fv.push_back(f.y_px - y0);
  double base_k = 0;
  bool have_base = false;
  const NearestLine nearest(ly);
  auto absolute_distance = [&](double k, double offset) {
    // Bitwise the same k (so 0 and -0 differ): the same products.
    if (!have_base || std::memcmp(&k, &base_k, sizeof k) != 0) {
      for (std::size_t i = 0; i < fv.size(); ++i) base[i] = y0 + k * fv[i];
      base_k = k;
      have_base = true;
    }
    return absolute_distance_sum(base, ly, nearest, offset);
  };
  const double max_offset = p_.max_offset_line_heights * input.text.line_height_px;
  const SearchResult best = minimise_on_grid(absolute_distance, {p_.min_stretch, p_.max_stretch, 20}, {-max_offset, max_offset, 20});
  std::vector<int> line;
  line.reserve(fx.size());
  for (const auto& f : fx) line.push_back(nearest_line(ly, y0 + best.a * (f.y_px - y0) + best.b));
  return {std::move(line), {{"stretch_factor", best.a}, {"stretch_offset_px", best.b}}};
}

}  // namespace gazemill
