#pragma once
// Region files: a boxes file (one row per region and line it covers), or an
// items file (item text with '/' between regions) laid out with the
// protocol's font metrics.

#include <string>

#include "pipeline/protocol.h"
#include "pipeline/regions.h"

namespace gazemill {

/// Columns: item, region (1-based, reading order), label, left_px, top_px,
/// right_px, bottom_px, line (1-based); optional condition, role, letters, words.
RegionCatalogue read_region_boxes(const std::string& path, double char_width_px);

/// Columns: item, text; optional condition, roles ("3=target 4=spillover", 1-based regions).
RegionCatalogue read_items_file(const std::string& path, const TextLayoutSpec& layout);

/// The protocol's regions, with file names relative to the protocol's folder.
RegionCatalogue load_regions(const Protocol& protocol);

}  // namespace gazemill
