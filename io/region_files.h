#pragma once
// Region files: a boxes file (one row per region and line it covers), or an
// items file (item text with '/' between regions) laid out with the
// protocol's font metrics.

#include <string>

#include "pipeline/protocol.h"
#include "pipeline/regions.h"

namespace gazemill {

/// Columns: item, region (1-based, reading order), label, left_px, top_px,
/// right_px, bottom_px, line (1-based); optional role, letters, words; and
/// a column for each design factor the layouts differ by (any of `factors`).
/// Any other column is an error naming it.
RegionCatalogue read_region_boxes(const std::string& path, double char_width_px, const std::vector<std::string>& factors);

/// Columns: item, text; optional roles ("3=target 4=spillover", 1-based
/// regions, each of which must exist); and a column for each design factor
/// the texts differ by. Any other column is an error naming it.
RegionCatalogue read_items_file(const std::string& path, const TextLayoutSpec& layout, const std::vector<std::string>& factors);

/// The file the protocol's regions come from (boxes_file or items_file),
/// relative to the protocol's folder; "" without a [regions] section.
std::string regions_file(const Protocol& protocol);

/// The protocol's regions, with file names relative to the protocol's folder.
RegionCatalogue load_regions(const Protocol& protocol);

/// One row of an items file: the item, the levels of the factor columns the
/// file has (in the design's order, as RegionLayout::levels), and its text
/// with '/' between regions.
struct ItemText {
  std::string item;
  std::vector<std::string> levels;
  std::string text;
};
/// The rows of an items file, for drawing the text as it was laid out.
std::vector<ItemText> read_item_texts(const std::string& path, const std::vector<std::string>& factors);
/// The protocol's item texts; empty when its regions come from a boxes file.
std::vector<ItemText> load_item_texts(const Protocol& protocol);

}  // namespace gazemill
