#include "alignment/drift_output.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace gazemill {

DriftModelFit fit_drift_model(const DriftInput& input, const std::vector<int>& line) {
  const auto& fx = input.fixations;
  const auto& ly = input.text.line_y_px;
  const std::size_t n = line.size();
  DriftModelFit fit;
  fit.unexplained_px.resize(n);
  if (n == 0) return fit;
  const double x0 = word_span(input.text).left_px, y0 = ly.front();
  std::vector<double> u(n), v(n), r(n);
  double mu = 0, mv = 0, mr = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const double centre = ly[static_cast<std::size_t>(line[i])];
    u[i] = fx[i].x_px - x0;
    v[i] = centre - y0;
    r[i] = fx[i].y_px - centre;
    mu += u[i], mv += v[i], mr += r[i];
  }
  mu /= static_cast<double>(n), mv /= static_cast<double>(n), mr /= static_cast<double>(n);
  // Least squares on centred values: the offset then follows from the means.
  double suu = 0, svv = 0, suv = 0, sur = 0, svr = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const double du = u[i] - mu, dv = v[i] - mv, dr = r[i] - mr;
    suu += du * du, svv += dv * dv, suv += du * dv, sur += du * dr, svr += dv * dr;
  }
  constexpr double kTiny = 1e-9;
  const double det = suu * svv - suv * suv;
  if (suu > kTiny && svv > kTiny && det > 1e-9 * suu * svv) {
    fit.slope = (svv * sur - suv * svr) / det;
    fit.shift = (suu * svr - suv * sur) / det;
  } else if (suu > kTiny) {
    fit.slope = sur / suu;
  } else if (svv > kTiny) {
    fit.shift = svr / svv;
  }
  fit.offset_px = mr - fit.slope * mu - fit.shift * mv;
  for (std::size_t i = 0; i < n; ++i) fit.unexplained_px[i] = r[i] - (fit.offset_px + fit.slope * u[i] + fit.shift * v[i]);
  return fit;
}

std::vector<double> fixation_confidence(const DriftInput& input, const std::vector<int>& line) {
  const DriftModelFit fit = fit_drift_model(input, line);
  std::vector<double> c;
  c.reserve(line.size());
  for (double e : fit.unexplained_px) c.push_back(std::clamp(1.0 - std::abs(e) / input.text.line_height_px, 0.0, 1.0));
  return c;
}

double assignment_confidence(const DriftInput& input, const std::vector<int>& line) {
  if (line.empty()) return 1.0;
  double sum = 0;
  for (double c : fixation_confidence(input, line)) sum += c;
  return sum / static_cast<double>(line.size());
}

DriftOutput make_drift_output(const DriftInput& input, std::vector<int> line, const std::map<std::string, double>& method_values) {
  const auto& fx = input.fixations;
  const auto& ly = input.text.line_y_px;
  if (line.size() != fx.size()) throw std::logic_error("a drift method returned a line count unlike its fixation count");
  DriftOutput out;
  out.corrected_y_px.reserve(line.size());
  double moved = 0, sum_r2 = 0;
  for (std::size_t i = 0; i < line.size(); ++i) {
    if (line[i] < 0 || static_cast<std::size_t>(line[i]) >= ly.size()) throw std::logic_error("a drift method returned a line out of range");
    const double centre = ly[static_cast<std::size_t>(line[i])];
    out.corrected_y_px.push_back(centre);
    sum_r2 += (fx[i].y_px - centre) * (fx[i].y_px - centre);
    if (line[i] != nearest_line(ly, fx[i].y_px)) moved += 1;
  }
  const DriftModelFit model = fit_drift_model(input, line);
  double sum_e2 = 0, confidence = 0;
  for (double e : model.unexplained_px) {
    sum_e2 += e * e;
    confidence += std::clamp(1.0 - std::abs(e) / input.text.line_height_px, 0.0, 1.0);
  }
  const double n = static_cast<double>(line.size());
  out.fit = method_values;
  out.fit["offset_px"] = model.offset_px;
  out.fit["slope"] = model.slope;
  out.fit["shift"] = model.shift;
  out.fit["residual_rms_px"] = n > 0 ? std::sqrt(sum_r2 / n) : 0.0;
  out.fit["unexplained_rms_px"] = n > 0 ? std::sqrt(sum_e2 / n) : 0.0;
  out.fit["moved_off_nearest_share"] = n > 0 ? moved / n : 0.0;
  out.fit["confidence"] = n > 0 ? confidence / n : 1.0;
  out.line = std::move(line);
  return out;
}

}  // namespace gazemill
