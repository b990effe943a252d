#include "detectors/visual_angle.h"

#include <cmath>
#include <numbers>

namespace gazemill {

namespace {
constexpr double kDegPerRad = 180.0 / std::numbers::pi;
}

VisualAngle::VisualAngle(const ScreenGeometry& s)
    : mm_per_px_x_(s.width_mm / s.width_px),
      mm_per_px_y_(s.height_mm / s.height_px),
      distance_mm_(s.viewing_distance_mm),
      centre_x_px_(s.width_px / 2.0),
      centre_y_px_(s.height_px / 2.0) {}

double VisualAngle::x_deg(double x_px) const { return std::atan((x_px - centre_x_px_) * mm_per_px_x_ / distance_mm_) * kDegPerRad; }
double VisualAngle::y_deg(double y_px) const { return std::atan((y_px - centre_y_px_) * mm_per_px_y_ / distance_mm_) * kDegPerRad; }
double VisualAngle::x_px(double x_deg) const { return centre_x_px_ + std::tan(x_deg / kDegPerRad) * distance_mm_ / mm_per_px_x_; }
double VisualAngle::y_px(double y_deg) const { return centre_y_px_ + std::tan(y_deg / kDegPerRad) * distance_mm_ / mm_per_px_y_; }

double VisualAngle::pixels_per_degree_at_centre() const {
  return 2.0 * distance_mm_ * std::tan(0.5 / kDegPerRad) / mm_per_px_x_;
}

double visual_angle_deg(double size_mm, double distance_mm) { return 2.0 * std::atan(size_mm / (2.0 * distance_mm)) * kDegPerRad; }

}  // namespace gazemill
