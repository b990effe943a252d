#include "alignment/regress_corrector.h"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <vector>

#include "alignment/grid_search.h"

namespace gazemill {
namespace {

// The sum over fixations of the squared distance from the fixation, moved
// by slope and offset, to its nearest line: y_i - slope * (x_i - x0) - offset
// against the lines, added in fixation order. Each fixation's x from the
// leftmost word centre does not depend on the fitted values and is computed
// once; the grid visits 21 offsets per slope, so y_i - slope * (x_i - x0) is
// kept for the last slope asked, and row() sums the 21 offsets of a grid row
// together (21 independent sums, each in the same order as one call would
// add it, so the same values). Every value is the expression written out per
// fixation, in the same order: the same bits as computing it afresh.
class SquaredDistance {
 public:
  SquaredDistance(const std::vector<DriftFixation>& fx, const std::vector<double>& ly, double x0)
      : ly_(ly), nearest_(ly), base_(fx.size()) {
    fy_.reserve(fx.size());
    fu_.reserve(fx.size());
    for (const auto& f : fx) {
      fy_.push_back(f.y_px);
      fu_.push_back(f.x_px - x0);
    }
  }

  double operator()(double slope, double offset) const {
    double sum = 0;
    row(slope, &offset, 1, &sum);
    return sum;
  }

  // out[k] = (*this)(slope, offsets[k]) for k < count. Out of line on
  // purpose: inlined into the grid search, the compiler kept the sums in
  // memory across the whole loop, which made it slower.
  [[gnu::noinline]] void row(double slope, const double* offsets, std::size_t count, double* out) const {
    set_slope(slope);
    for (std::size_t k = 0; k < count; ++k) out[k] = 0;
    if (count == 1) {
      double sum = 0;
      const double offset = offsets[0];
      for (const double b : base_) {
        const double y = b - offset;
        const double d = y - ly_[static_cast<std::size_t>(nearest_(y))];
        sum += d * d;
      }
      out[0] = sum;
    } else if (ly_.size() == 1) {
      const double centre = ly_[0];  // every fixation's nearest line
      for (const double b : base_) {
        for (std::size_t k = 0; k < count; ++k) {
          const double d = (b - offsets[k]) - centre;
          out[k] += d * d;
        }
      }
    } else {
      for (const double b : base_) {
        for (std::size_t k = 0; k < count; ++k) {
          const double y = b - offsets[k];
          const double d = y - ly_[static_cast<std::size_t>(nearest_(y))];
          out[k] += d * d;
        }
      }
    }
  }

 private:
  void set_slope(double slope) const {
    // Bitwise the same slope (so 0 and -0 differ): the same products.
    if (have_base_ && std::memcmp(&slope, &base_slope_, sizeof slope) == 0) return;
    for (std::size_t i = 0; i < fy_.size(); ++i) base_[i] = fy_[i] - slope * fu_[i];
    base_slope_ = slope;
    have_base_ = true;
  }

  const std::vector<double>& ly_;
  NearestLine nearest_;
  std::vector<double> fy_, fu_;
  mutable std::vector<double> base_;
  mutable double base_slope_ = 0;
  mutable bool have_base_ = false;
};

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
  const SquaredDistance squared_distance(fx, ly, x0);
  const double max_offset = p_.max_offset_line_heights * input.text.line_height_px;
  const SearchResult best = minimise_on_grid(squared_distance, {-p_.max_slope, p_.max_slope, 20}, {-max_offset, max_offset, 20});
  std::vector<int> line;
  line.reserve(fx.size());
  for (const auto& f : fx) line.push_back(nearest_line(ly, f.y_px - best.a * (f.x_px - x0) - best.b));
  const double sd = std::clamp(std::sqrt(best.value / static_cast<double>(fx.size())), p_.min_sd_px, p_.max_sd_px);
  return {std::move(line), {{"model_slope", best.a}, {"model_offset_px", best.b}, {"model_sd_px", sd}}};
}

}  // namespace gazemill
