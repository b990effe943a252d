#pragma once
// An SVG drawing of one trial for a person reviewing drift correction: the
// text lines and region boxes, each fixation where it was recorded (hollow)
// and where drift correction put it (filled), joined by a line, numbered in
// time order and sized by duration. Colours from the Okabe & Ito (2008)
// palette, distinguishable with the common colour-vision deficiencies.

#include <string>
#include <vector>

namespace gazemill {

struct DrawingBox {
  double left_px = 0, top_px = 0, right_px = 0, bottom_px = 0;
  std::string label;
};

struct DrawingFixation {
  double x_px = 0, y_px = 0;  // as recorded
  double corrected_y_px = 0;  // NaN when on no line
  double duration_ms = 0;
};

struct TrialDrawing {
  std::string title;     // e.g. "p03, trial 41 (item P02): majority, confidence 0.62"
  std::vector<DrawingBox> boxes;
  std::vector<std::pair<double, double>> lines;  // top and bottom of each text line, px
  std::vector<DrawingFixation> fixations;        // time order
};

std::string trial_drawing_svg(const TrialDrawing& drawing);

}  // namespace gazemill
