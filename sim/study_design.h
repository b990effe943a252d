#pragma once
// The design of a simulated reading experiment: participants x items x
// conditions, each participant seeing every item once, in one condition,
// by Latin-square rotation.

#include <string>
#include <vector>

namespace gazemill::sim {

/// An item's text with '/' between regions. The target region is written
/// as [variant0|variant1|...], one variant per condition, in condition order.
struct ItemTemplate {
  std::string id;
  std::string marked_text;
};

struct StudyDesign {
  std::string name = "study";
  std::string task = "reading";
  std::vector<std::string> conditions;  // e.g. {"frequent", "rare"}
  std::vector<ItemTemplate> items;
  int participants = 4;
};

/// The text of `item` in condition `condition` and the index of its target region
/// (-1 when the item has no [..|..] region).
struct ResolvedItem {
  std::string marked_text;
  int target_region = -1;
};
ResolvedItem resolve_item(const ItemTemplate& item, std::size_t condition);

/// Latin square: participant p sees item i in condition (i + p) mod K.
std::size_t condition_for(std::size_t participant, std::size_t item, std::size_t conditions);

/// Items the bundled demo study uses: short news reports from a harbour town,
/// with a frequent or a rare word in the target region. Written for gazemill.
StudyDesign demo_design();

}  // namespace gazemill::sim
