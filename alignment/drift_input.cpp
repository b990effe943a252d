#include "alignment/drift_input.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

namespace gazemill {

void validate(const DriftInput& input) {
  const DriftText& t = input.text;
  if (t.line_y_px.empty()) throw std::invalid_argument("drift correction needs at least one text line");
  for (std::size_t i = 0; i < t.line_y_px.size(); ++i) {
    if (!std::isfinite(t.line_y_px[i])) throw std::invalid_argument("line " + std::to_string(i) + " has no finite centre y");
    if (i > 0 && !(t.line_y_px[i] > t.line_y_px[i - 1])) {
      throw std::invalid_argument("line centres must increase from top to bottom; line " + std::to_string(i) + " does not");
    }
  }
  if (!(t.line_height_px > 0) || !std::isfinite(t.line_height_px)) throw std::invalid_argument("line_height_px must be above zero");
  if (!(t.font_height_px > 0) || !std::isfinite(t.font_height_px)) throw std::invalid_argument("font_height_px must be above zero");
  if (t.word_x_px.size() != t.line_y_px.size()) {
    throw std::invalid_argument("word_x_px has " + std::to_string(t.word_x_px.size()) + " lines, line_y_px " +
                                std::to_string(t.line_y_px.size()));
  }
  for (std::size_t i = 0; i < t.word_x_px.size(); ++i) {
    for (double x : t.word_x_px[i]) {
      if (!std::isfinite(x)) throw std::invalid_argument("line " + std::to_string(i) + " has a word centre that is not finite");
    }
  }
  for (std::size_t i = 0; i < input.fixations.size(); ++i) {
    const DriftFixation& f = input.fixations[i];
    if (!std::isfinite(f.x_px) || !std::isfinite(f.y_px)) {
      throw std::invalid_argument("fixation " + std::to_string(i) + " has a position that is not finite");
    }
  }
}

int nearest_line(const std::vector<double>& line_y_px, double y_px) {
  // Lines are sorted, so the nearest is one of the two around y.
  const auto it = std::lower_bound(line_y_px.begin(), line_y_px.end(), y_px);
  if (it == line_y_px.begin()) return 0;
  if (it == line_y_px.end()) return static_cast<int>(line_y_px.size()) - 1;
  const auto below = it - line_y_px.begin();
  const double d_below = *it - y_px;
  const double d_above = y_px - *(it - 1);
  return static_cast<int>(d_above <= d_below ? below - 1 : below);
}

TextSpan word_span(const DriftText& text) {
  TextSpan s;
  bool any = false;
  for (const auto& line : text.word_x_px) {
    for (double x : line) {
      if (!any) {
        s = {x, x};
        any = true;
      }
      s.left_px = std::min(s.left_px, x);
      s.right_px = std::max(s.right_px, x);
    }
  }
  return s;
}

}  // namespace gazemill
