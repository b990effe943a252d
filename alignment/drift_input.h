#pragma once
// What a drift-correction method sees of one trial: its fixations in time
// order and the text on screen (line centres, line and font height, and the
// words of each line in reading order). Lengths in px, origin at the
// screen's top left, y growing downwards.

#include <cstddef>
#include <vector>

namespace gazemill {

struct DriftFixation {
  double x_px = 0;
  double y_px = 0;
  double duration_ms = 0;
};

struct DriftText {
  std::vector<double> line_y_px;   // centre y of each line, top to bottom (strictly increasing)
  double line_height_px = 0;       // distance from one line's centre to the next (the line pitch)
  double font_height_px = 0;       // chain's thresholds are multiples of it
  // For each line, the x centres of its words in reading order (left to
  // right); warp and compare need them, the other methods do not.
  std::vector<std::vector<double>> word_x_px;
  std::size_t line_count() const { return line_y_px.size(); }
};

struct DriftInput {
  std::vector<DriftFixation> fixations;  // one trial, in time order
  DriftText text;
};

/// Throws std::invalid_argument naming the first problem: no line, line
/// centres not finite or not strictly increasing, a line or font height not
/// above zero, word_x_px of another length than line_y_px, a coordinate that
/// is not finite.
void validate(const DriftInput& input);

/// Index of the line whose centre is nearest y_px (the upper line on a tie,
/// our choice). Needs at least one line.
int nearest_line(const std::vector<double>& line_y_px, double y_px);

/// The x extent of the text's word centres (leftmost, rightmost); {0, 0}
/// when no line has words.
struct TextSpan {
  double left_px = 0;
  double right_px = 0;
};
TextSpan word_span(const DriftText& text);

}  // namespace gazemill
