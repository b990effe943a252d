#include "detectors/smooth_pursuit.h"

#include <algorithm>
#include <cmath>

namespace gazemill {
namespace {

// Running extent of the valid samples added so far.
struct Extent {
  double x_lo = INFINITY, x_hi = -INFINITY, y_lo = INFINITY, y_hi = -INFINITY;
  void add(double x, double y) {
    x_lo = std::min(x_lo, x), x_hi = std::max(x_hi, x);
    y_lo = std::min(y_lo, y), y_hi = std::max(y_hi, y);
  }
  double dispersion() const { return x_hi < x_lo ? 0.0 : (x_hi - x_lo) + (y_hi - y_lo); }
};

}  // namespace

std::size_t label_pursuit(const GazeTrace& g, const PursuitParams& p, std::vector<SampleLabel>& labels) {
  if (!(p.dispersion_deg > 0)) return 0;
  const std::size_t n = labels.size();
  const std::size_t window = static_cast<std::size_t>(std::max(2.0, std::round(p.window_ms * 1000.0 / g.interval_us)));
  const auto add = [&](Extent& e, std::size_t k) {
    if (g.valid[k]) e.add(g.x_deg[k], g.y_deg[k]);
  };
  std::size_t relabelled = 0;
  std::size_t a = 0;
  while (a < n) {
    if (labels[a] != SampleLabel::fixation) {
      ++a;
      continue;
    }
    std::size_t b = a;
    while (b < n && labels[b] == SampleLabel::fixation) ++b;
    // The run [a, b): slide a window through it as I-DT does.
    const std::size_t w = std::min(window, b - a);
    std::size_t i = a;
    while (i < b) {
      if (b - i < w) {  // too few samples left for a window: not a fixation
        for (; i < b; ++i) labels[i] = SampleLabel::pursuit, ++relabelled;
        break;
      }
      Extent e;
      for (std::size_t k = i; k < i + w; ++k) add(e, k);
      if (e.dispersion() > p.dispersion_deg) {
        labels[i] = SampleLabel::pursuit;
        ++relabelled;
        ++i;
        continue;
      }
      std::size_t j = i + w;
      while (j < b) {
        Extent grown = e;
        add(grown, j);
        if (grown.dispersion() > p.dispersion_deg) break;
        e = grown;
        ++j;
      }
      i = j;  // [i, j) stays fixation
    }
    a = b;
  }
  return relabelled;
}

}  // namespace gazemill
