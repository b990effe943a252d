#pragma once
// Pixels <-> degrees of visual angle for a flat screen viewed head-on from
// its centre, with the exact formula theta = 2 * atan(s / (2 d)), not the
// small-angle shortcut theta = s / d.

#include "pipeline/recording.h"

namespace gazemill {

class VisualAngle {
 public:
  explicit VisualAngle(const ScreenGeometry& screen);

  /// Horizontal / vertical angle (deg) of a screen point from the screen centre.
  double x_deg(double x_px) const;
  double y_deg(double y_px) const;
  /// Inverse of x_deg / y_deg.
  double x_px(double x_deg) const;
  double y_px(double y_deg) const;
  /// Pixels spanned by one degree centred on the screen centre: 2 d tan(0.5 deg) in px.
  double pixels_per_degree_at_centre() const;

 private:
  double mm_per_px_x_, mm_per_px_y_, distance_mm_, centre_x_px_, centre_y_px_;
};

/// Visual angle (deg) of an object of size `size_mm`, centred on the line of sight, at `distance_mm`.
double visual_angle_deg(double size_mm, double distance_mm);

}  // namespace gazemill
