#pragma once
// The regions of one item as displayed in one condition: lines, regions
// (one box per line they cover), and where known the characters, for
// fixation-to-region mapping and landing positions. Built from item text and
// a text layout, or read from a boxes file.

#include <map>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/text_layout.h"

namespace gazemill {

/// The part of a region on one line. A region that wraps has one box per line.
struct RegionBox {
  int line = 0;
  double left_px = 0, top_px = 0, right_px = 0, bottom_px = 0;
  // Landing positions count characters in reading order from the region's
  // first letter: this box's first letter is `chars_before` characters in.
  double first_letter_left_px = 0;
  double chars_before = 0;
};

struct RegionInfo {
  int id = 0;               // 0-based, in reading order (line, then left to right)
  std::string label;
  std::string role;         // e.g. "target", "spillover"; may be empty
  int line = 0;             // of its first box
  int last_line = 0;        // of its last box (the same unless it wraps)
  std::vector<RegionBox> boxes;
  int letters = 0;          // characters without spaces; 0 when unknown
  int words = 0;            // 0 when unknown
  bool has_letters = false;
};

struct LineInfo {
  double top_px = 0, bottom_px = 0;
  double centre_px() const { return 0.5 * (top_px + bottom_px); }
};

struct RegionLayout {
  std::string item;
  std::string condition;    // empty: the same layout in every condition
  std::vector<LineInfo> lines;
  std::vector<RegionInfo> regions;
  double char_width_px = 0; // for landing positions in characters; 0 when unknown
};

/// A layout from laid-out text; `roles` gives a role per region id (optional).
RegionLayout region_layout_from_text(const LaidOutItem& item, const TextLayoutSpec& spec, const std::string& condition,
                                     const std::map<int, std::string>& roles = {});

/// All layouts of a study, found by item and condition (falling back to the
/// condition-free layout of the item).
class RegionCatalogue {
 public:
  void add(RegionLayout layout);
  const RegionLayout* find(const std::string& item, const std::string& condition) const;
  bool empty() const { return layouts_.empty(); }
  std::size_t size() const { return layouts_.size(); }

 private:
  std::map<std::pair<std::string, std::string>, RegionLayout> layouts_;
};

}  // namespace gazemill
