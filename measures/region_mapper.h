#pragma once
// Assigns a fixation to a line and a region of the item on screen, with the
// protocol's choices for fixations between lines or beside the text.

#include <optional>

#include "pipeline/protocol.h"
#include "pipeline/regions.h"

namespace gazemill {

struct FixationPlace {
  int line = -1;    // -1: not on any line
  int region = -1;  // -1: not in any region
  std::optional<double> landing_chars;  // from the left edge of the region's first letter, in characters
};

/// Lines: the nearest line centre; when off_line_nearest is false only a
/// fixation inside a line's box counts, otherwise one within
/// max_line_distance_px of the centre (default one line height).
/// Regions: the box on that line containing x; beside the text on either side,
/// the line's first or last region when margin_nearest and within margin_px
/// (default two characters, or 20 px without a character width).
FixationPlace place_fixation(const RegionLayout& layout, double x_px, double y_px, const RegionSpec& spec);

}  // namespace gazemill
