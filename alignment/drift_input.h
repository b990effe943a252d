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

/// nearest_line for many y against the same lines (the fitting methods ask
/// it for every fixation hundreds of times per trial): the same answer for
/// every y, found from a guess that is right at once for evenly spaced
/// lines. Keeps a reference to the centres, which must outlive it and not
/// change.
class NearestLine {
 public:
  explicit NearestLine(const std::vector<double>& line_y_px)
      : ly_(line_y_px.data()), n_(line_y_px.size()),
        per_px_(n_ > 1 ? static_cast<double>(n_ - 1) / (line_y_px.back() - line_y_px.front()) : 0.0),
        last_gap_(static_cast<double>(n_ > 1 ? n_ - 1 : 0)) {}

  int operator()(double y_px) const {
    // The nearest centre is p (the first centre not below y, which
    // std::lower_bound finds) or the one before it, as in nearest_line.
    if (n_ == 1) return 0;
    if (!(ly_[0] < y_px)) return 0;  // p == 0; also a y that is NaN
    if (ly_[n_ - 1] < y_px) return static_cast<int>(n_) - 1;  // p == n
    // Now n >= 2 and 1 <= p <= n - 1. Guess p from the mean spacing, then
    // step to it; each loop stops by the two tests above.
    const double g = (y_px - ly_[0]) * per_px_;
    // 0 <= g here, so a signed conversion (one instruction) is exact.
    std::size_t p = g < last_gap_ ? static_cast<std::size_t>(static_cast<std::ptrdiff_t>(g)) + 1 : n_ - 1;
    while (!(ly_[p - 1] < y_px)) --p;
    while (ly_[p] < y_px) ++p;
    const double d_below = ly_[p] - y_px;
    const double d_above = y_px - ly_[p - 1];
    // Which neighbour is nearer is a coin toss to the branch predictor: no branch.
    return static_cast<int>(p) - static_cast<int>(d_above <= d_below);
  }

 private:
  const double* ly_;
  std::size_t n_;
  double per_px_;    // lines per px, from the first centre to the last
  double last_gap_;  // n - 1
};

/// The x extent of the text's word centres (leftmost, rightmost); {0, 0}
/// when no line has words.
struct TextSpan {
  double left_px = 0;
  double right_px = 0;
};
TextSpan word_span(const DriftText& text);

}  // namespace gazemill
