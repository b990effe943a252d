#include "measures/region_mapper.h"

#include <cmath>

namespace gazemill {

FixationPlace place_fixation(const RegionLayout& L, double x, double y, const RegionSpec& spec) {
  FixationPlace out;
  if (L.lines.empty()) return out;
  // Line.
  int best = -1;
  double best_d = 1e300;
  for (std::size_t l = 0; l < L.lines.size(); ++l) {
    const double d = std::abs(y - L.lines[l].centre_px());
    if (d < best_d) {
      best_d = d;
      best = static_cast<int>(l);
    }
  }
  const LineInfo& line = L.lines[static_cast<std::size_t>(best)];
  const double height = line.bottom_px - line.top_px;
  const bool inside = y >= line.top_px && y <= line.bottom_px;
  const double max_d = spec.max_line_distance_px > 0 ? spec.max_line_distance_px : height;
  if (!inside && !(spec.off_line_nearest && best_d <= max_d)) return out;
  out.line = best;

  // Region on that line.
  const RegionInfo* first = nullptr;
  const RegionInfo* last = nullptr;
  const RegionBox* hit = nullptr;
  const RegionBox* first_box = nullptr;
  const RegionBox* last_box = nullptr;
  for (const RegionInfo& r : L.regions) {
    for (const RegionBox& b : r.boxes) {
      if (b.line != best) continue;
      if (x >= b.left_px && x < b.right_px) {
        out.region = r.id;
        hit = &b;
        break;
      }
      if (!first_box || b.left_px < first_box->left_px) {
        first_box = &b;
        first = &r;
      }
      if (!last_box || b.right_px > last_box->right_px) {
        last_box = &b;
        last = &r;
      }
    }
    if (out.region >= 0) break;
  }
  if (out.region < 0 && spec.margin_nearest && first_box) {
    const double margin = spec.margin_px > 0 ? spec.margin_px : (L.char_width_px > 0 ? 2 * L.char_width_px : 20.0);
    if (x < first_box->left_px && first_box->left_px - x <= margin) {
      out.region = first->id;
      hit = first_box;
    } else if (x >= last_box->right_px && x - last_box->right_px <= margin) {
      out.region = last->id;
      hit = last_box;
    }
  }
  if (hit && L.char_width_px > 0) out.landing_chars = hit->chars_before + (x - hit->first_letter_left_px) / L.char_width_px;
  return out;
}

}  // namespace gazemill
