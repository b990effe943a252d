#include "alignment/drift_output.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace gazemill {

double assignment_confidence(const DriftInput& input, const std::vector<int>& line) {
  if (line.empty()) return 1.0;
  const auto& ly = input.text.line_y_px;
  double sum = 0;
  for (std::size_t i = 0; i < line.size(); ++i) {
    const double r = std::abs(input.fixations[i].y_px - ly[static_cast<std::size_t>(line[i])]);
    sum += std::clamp(1.0 - r / input.text.line_height_px, 0.0, 1.0);
  }
  return sum / static_cast<double>(line.size());
}

DriftOutput make_drift_output(const DriftInput& input, std::vector<int> line, const std::map<std::string, double>& method_values) {
  const auto& fx = input.fixations;
  const auto& ly = input.text.line_y_px;
  if (line.size() != fx.size()) throw std::logic_error("a drift method returned a line count unlike its fixation count");
  DriftOutput out;
  out.corrected_y_px.reserve(line.size());
  const double x_ref = word_span(input.text).left_px;
  // Residuals against x, centred for a stable least-squares fit.
  double sx = 0, sr = 0, moved = 0, sum_r2 = 0;
  for (std::size_t i = 0; i < line.size(); ++i) {
    if (line[i] < 0 || static_cast<std::size_t>(line[i]) >= ly.size()) throw std::logic_error("a drift method returned a line out of range");
    const double y_line = ly[static_cast<std::size_t>(line[i])];
    out.corrected_y_px.push_back(y_line);
    const double r = fx[i].y_px - y_line;
    sx += fx[i].x_px - x_ref;
    sr += r;
    sum_r2 += r * r;
    if (line[i] != nearest_line(ly, fx[i].y_px)) moved += 1;
  }
  const double n = static_cast<double>(line.size());
  double slope = 0, offset = 0, rms = 0, moved_share = 0;
  if (n > 0) {
    const double mx = sx / n, mr = sr / n;
    double sxx = 0, sxr = 0;
    for (std::size_t i = 0; i < line.size(); ++i) {
      const double dx = fx[i].x_px - x_ref - mx;
      sxx += dx * dx;
      sxr += dx * (fx[i].y_px - ly[static_cast<std::size_t>(line[i])] - mr);
    }
    // Fixations in one column leave the slope undefined; no drift across x is the safe reading.
    slope = sxx > 1e-9 ? sxr / sxx : 0.0;
    offset = mr - slope * mx;
    rms = std::sqrt(sum_r2 / n);
    moved_share = moved / n;
  }
  out.fit = method_values;
  out.fit["slope"] = slope;
  out.fit["offset_px"] = offset;
  out.fit["residual_rms_px"] = rms;
  out.fit["moved_off_nearest_share"] = moved_share;
  out.fit["confidence"] = assignment_confidence(input, line);
  out.line = std::move(line);
  return out;
}

}  // namespace gazemill
