#include "detectors/visual_angle.h"

#include <cmath>
#include <numbers>

namespace gazemill {

namespace {
constexpr double kDegPerRad = 180.0 / std::numbers::pi;
}

VisualAngle::Axis::Axis(int size_px, double mm_per_px, double distance_mm)
    : mm_per_px_(mm_per_px), distance_mm_(distance_mm), centre_px_(size_px / 2.0), first_px_(-static_cast<double>(size_px)) {
  // One screen's width beyond either edge: gaze further off is rare and is
  // still converted exactly.
  // No table for a screen no display has (a typing slip in a protocol): exact, and no giant table.
  constexpr int kLargestTabulatedPx = 32768;
  if (size_px <= 0 || size_px > kLargestTabulatedPx || !(mm_per_px > 0) || !(distance_mm > 0)) return;
  const std::size_t nodes = 3 * static_cast<std::size_t>(size_px) + 1;
  value_deg_.resize(nodes);
  slope_deg_per_px_.resize(nodes);
  const double k = mm_per_px / distance_mm;  // tan(theta) per px from the centre
  for (std::size_t i = 0; i < nodes; ++i) {
    const double u = (first_px_ + static_cast<double>(i) - centre_px_) * k;
    value_deg_[i] = std::atan(u) * kDegPerRad;
    slope_deg_per_px_[i] = k / (1.0 + u * u) * kDegPerRad;  // d/dpx atan(k (px - c))
  }
  last_node_ = static_cast<double>(nodes - 1);
}

double VisualAngle::Axis::exact_deg(double px) const { return std::atan((px - centre_px_) * mm_per_px_ / distance_mm_) * kDegPerRad; }

VisualAngle::VisualAngle(const ScreenGeometry& s)
    : x_(s.width_px, s.width_mm / s.width_px, s.viewing_distance_mm),
      y_(s.height_px, s.height_mm / s.height_px, s.viewing_distance_mm),
      distance_mm_(s.viewing_distance_mm) {}

double VisualAngle::x_px(double x_deg) const { return x_.centre_px() + std::tan(x_deg / kDegPerRad) * distance_mm_ / x_.mm_per_px(); }
double VisualAngle::y_px(double y_deg) const { return y_.centre_px() + std::tan(y_deg / kDegPerRad) * distance_mm_ / y_.mm_per_px(); }

double VisualAngle::pixels_per_degree_at_centre() const {
  return 2.0 * distance_mm_ * std::tan(0.5 / kDegPerRad) / x_.mm_per_px();
}

double visual_angle_deg(double size_mm, double distance_mm) { return 2.0 * std::atan(size_mm / (2.0 * distance_mm)) * kDegPerRad; }

}  // namespace gazemill
