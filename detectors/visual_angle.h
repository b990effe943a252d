#pragma once
// Pixels <-> degrees of visual angle for a flat screen viewed head-on from
// its centre, with the exact formula theta = 2 * atan(s / (2 d)), not the
// small-angle shortcut theta = s / d.

#include <vector>

#include "pipeline/recording.h"

namespace gazemill {

class VisualAngle {
 public:
  explicit VisualAngle(const ScreenGeometry& screen);

  /// Horizontal / vertical angle (deg) of a screen point from the screen centre.
  double x_deg(double x_px) const { return x_.deg(x_px); }
  double y_deg(double y_px) const { return y_.deg(y_px); }
  /// Inverse of x_deg / y_deg.
  double x_px(double x_deg) const;
  double y_px(double y_deg) const;
  /// Pixels spanned by one degree centred on the screen centre: 2 d tan(0.5 deg) in px.
  double pixels_per_degree_at_centre() const;

 private:
  // atan of one axis, tabulated once per screen geometry: detection converts
  // every sample, and atan cost more than the rest of detection together.
  // Cubic Hermite interpolation between whole pixels from exact values and
  // slopes; its error bound h^4 max|f''''| / 384 (h = 1 px) is below 1e-12 deg
  // for any screen at a reading distance. Points off the table get atan itself.
  class Axis {
   public:
    Axis(int size_px, double mm_per_px, double distance_mm);
    double deg(double px) const {  // inline: it runs for every sample
      const double u = px - first_px_;
      // Written so that NaN fails the test and takes the exact path.
      if (!(u >= 0.0 && u < last_node_)) return exact_deg(px);
      const auto i = static_cast<std::size_t>(u);
      const double t = u - static_cast<double>(i), t2 = t * t, t3 = t2 * t;
      const double h00 = 2 * t3 - 3 * t2 + 1, h10 = t3 - 2 * t2 + t, h01 = 3 * t2 - 2 * t3, h11 = t3 - t2;
      return h00 * value_deg_[i] + h10 * slope_deg_per_px_[i] + h01 * value_deg_[i + 1] + h11 * slope_deg_per_px_[i + 1];
    }
    double exact_deg(double px) const;
    double centre_px() const { return centre_px_; }
    double mm_per_px() const { return mm_per_px_; }

   private:
    double mm_per_px_, distance_mm_, centre_px_, first_px_;
    double last_node_ = -1;  // the last node's offset from first_px_ (-1: no table)
    std::vector<double> value_deg_, slope_deg_per_px_;  // at first_px_ + k
  };
  Axis x_, y_;
  double distance_mm_;
};

/// Visual angle (deg) of an object of size `size_mm`, centred on the line of sight, at `distance_mm`.
double visual_angle_deg(double size_mm, double distance_mm);

}  // namespace gazemill
