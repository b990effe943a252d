#pragma once
// The regions of one item as displayed in one design cell: lines, regions
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
  std::vector<std::string> levels;  // of the catalogue's factors: the design cell it is shown in
  std::vector<LineInfo> lines;
  std::vector<RegionInfo> regions;
  // Per line, the x centres of its words in reading order (drift correction
  // aligns fixations with them); of its region boxes when words are unknown.
  std::vector<std::vector<double>> word_centre_x_px;
  double char_width_px = 0; // for landing positions in characters; 0 when unknown
};

/// A layout from laid-out text; `roles` gives a role per region id (optional).
RegionLayout region_layout_from_text(const LaidOutItem& item, const TextLayoutSpec& spec, const std::vector<std::string>& levels,
                                     const std::map<int, std::string>& roles = {});

/// All layouts of a study, found by item and by the levels of the design
/// factors the region file names (a layout may differ by any of them, or by none).
class RegionCatalogue {
 public:
  explicit RegionCatalogue(std::vector<std::string> factors = {}, std::string source = "")
      : factors_(std::move(factors)), source_(std::move(source)) {}
  /// The file the layouts were read from ("" when made otherwise), for messages.
  const std::string& source() const { return source_; }
  /// The design factors the layouts differ by (the region file's factor columns).
  const std::vector<std::string>& factors() const { return factors_; }
  void add(RegionLayout layout);
  /// The layout of `item` for a trial with these variables, or nullptr.
  const RegionLayout* find(const std::string& item, const std::map<std::string, std::string>& variables) const;
  /// "item 3" or "item 3 with frequency=rare, preview=valid", for messages.
  std::string describe(const std::string& item, const std::map<std::string, std::string>& variables) const;
  bool empty() const { return layouts_.empty(); }
  std::size_t size() const { return layouts_.size(); }
  const std::map<std::pair<std::string, std::vector<std::string>>, RegionLayout>& layouts() const { return layouts_; }

 private:
  std::vector<std::string> factors_;
  std::string source_;
  std::map<std::pair<std::string, std::vector<std::string>>, RegionLayout> layouts_;
};

}  // namespace gazemill
