#include "alignment/merge_corrector.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <cstddef>

namespace gazemill {
namespace {

// A run of fixations with the sums a least-squares line needs, so that the
// fit of two runs together costs O(1).
struct Run {
  std::vector<std::size_t> members;
  double n = 0, sx = 0, sy = 0, sxx = 0, sxy = 0, syy = 0;
  void add(std::size_t i, double x, double y) {
    members.push_back(i);
    n += 1, sx += x, sy += y, sxx += x * x, sxy += x * y, syy += y * y;
  }
  void absorb(const Run& o) {
    members.insert(members.end(), o.members.begin(), o.members.end());
    n += o.n, sx += o.sx, sy += o.sy, sxx += o.sxx, sxy += o.sxy, syy += o.syy;
  }
};

struct LineFit {
  double gradient = 0;
  double rms_px = 0;
};

LineFit fit_together(const Run& a, const Run& b) {
  const double n = a.n + b.n, sx = a.sx + b.sx, sy = a.sy + b.sy;
  const double cxx = (a.sxx + b.sxx) - sx * sx / n;
  const double cxy = (a.sxy + b.sxy) - sx * sy / n;
  const double cyy = (a.syy + b.syy) - sy * sy / n;
  // Fixations stacked at one x have no gradient; their spread is all error.
  const double g = cxx > 1e-9 ? cxy / cxx : 0.0;
  const double sse = std::max(0.0, cyy - g * cxy);
  return {g, std::sqrt(sse / n)};
}

}  // namespace

DriftParameters MergeCorrector::parameters() const {
  return {{"y_threshold_line_heights", p_.y_threshold_line_heights},
          {"max_gradient", p_.max_gradient},
          {"max_error_line_heights", p_.max_error_line_heights},
          {"max_mean_y_difference_line_heights", p_.max_mean_y_difference_line_heights}};
}

DriftCorrector::Assignment MergeCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const double h = input.text.line_height_px;
  const std::size_t m = input.text.line_count();
  // Coordinates relative to the first fixation keep the sums of squares small.
  const double x0 = fx.front().x_px, y0 = fx.front().y_px;
  std::vector<Run> runs(1);
  for (std::size_t i = 0; i < fx.size(); ++i) {
    if (i > 0 && (fx[i].x_px < fx[i - 1].x_px || std::abs(fx[i].y_px - fx[i - 1].y_px) > p_.y_threshold_line_heights * h)) {
      runs.emplace_back();
    }
    runs.back().add(i, fx[i].x_px - x0, fx[i].y_px - y0);
  }
  const double initial_runs = static_cast<double>(runs.size());

  struct Phase {
    double min_first, min_second;
    bool limited;
  };
  // Minimum run lengths (fixations) of the two runs of a pair, and whether the
  // gradient and error limits apply: the phases as Carr et al. describe them
  // (from memory).
  const Phase phases[] = {{3, 3, true}, {1, 3, true}, {1, 1, true}, {1, 1, false}};
  const double max_error_px = p_.max_error_line_heights * h;
  const double max_mean_gap_px = p_.max_mean_y_difference_line_heights * h;
  for (const Phase& ph : phases) {
    while (runs.size() > m) {
      std::size_t best_a = 0, best_b = 0;
      double best_error = std::numeric_limits<double>::infinity();
      for (std::size_t a = 0; a < runs.size(); ++a) {
        for (std::size_t b = a + 1; b < runs.size(); ++b) {
          const bool sizes = (runs[a].n >= ph.min_first && runs[b].n >= ph.min_second) ||
                             (runs[b].n >= ph.min_first && runs[a].n >= ph.min_second);
          if (!sizes) continue;
          const LineFit fit = fit_together(runs[a], runs[b]);
          if (ph.limited && (std::abs(fit.gradient) > p_.max_gradient || fit.rms_px > max_error_px)) continue;
          if (ph.limited && std::abs(runs[a].sy / runs[a].n - runs[b].sy / runs[b].n) > max_mean_gap_px) continue;
          if (fit.rms_px < best_error) {
            best_error = fit.rms_px;
            best_a = a;
            best_b = b;
          }
        }
      }
      if (!std::isfinite(best_error)) break;
      runs[best_a].absorb(runs[best_b]);
      runs.erase(runs.begin() + static_cast<std::ptrdiff_t>(best_b));
    }
  }
  // Runs by mean y, top first; with fewer runs than lines they take the top lines.
  std::stable_sort(runs.begin(), runs.end(), [](const Run& a, const Run& b) { return a.sy / a.n < b.sy / b.n; });
  std::vector<int> line(fx.size(), 0);
  for (std::size_t r = 0; r < runs.size(); ++r) {
    for (std::size_t i : runs[r].members) line[i] = static_cast<int>(r);
  }
  return {std::move(line), {{"initial_run_count", initial_runs}}};
}

}  // namespace gazemill
