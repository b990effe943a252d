#include "io/region_files.h"

#include <algorithm>
#include <filesystem>
#include <map>
#include <sstream>

#include "io/tsv_table.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {
constexpr int kMaxRegionsPerItem = 10000;
constexpr int kMaxLinesPerItem = 1000;
constexpr int kMaxCount = 1000000;  // letters or words of one region
}  // namespace

RegionCatalogue read_region_boxes(const std::string& path, double char_width_px) {
  TsvTable t(path);
  std::map<std::pair<std::string, std::string>, RegionLayout> layouts;
  for (std::size_t r = 0; r < t.rows(); ++r) {
    const std::string item = t.text(r, "item");
    const std::string condition = t.text_or(r, "condition", "");
    RegionLayout& L = layouts[{item, condition}];
    L.item = item;
    L.condition = condition;
    L.char_width_px = char_width_px;
    // Numbered from 1; the bounds keep a stray number from sizing a vector of billions.
    const int region = t.whole(r, "region", 1, kMaxRegionsPerItem) - 1;
    const int line = t.whole(r, "line", 1, kMaxLinesPerItem) - 1;
    RegionBox box{line, t.number(r, "left_px"), t.number(r, "top_px"), t.number(r, "right_px"), t.number(r, "bottom_px"), 0, 0};
    box.first_letter_left_px = box.left_px;
    if (box.right_px <= box.left_px || box.bottom_px <= box.top_px) {
      throw InputError({path, t.line_of(r), "right_px"}, "a box needs right_px > left_px and bottom_px > top_px");
    }
    if (static_cast<int>(L.regions.size()) <= region) L.regions.resize(static_cast<std::size_t>(region) + 1);
    RegionInfo& info = L.regions[static_cast<std::size_t>(region)];
    if (info.boxes.empty()) {
      info.id = region;
      info.label = t.text(r, "label");
      info.role = t.text_or(r, "role", "");
      info.line = line;
      if (t.has("letters")) {
        info.letters = t.whole(r, "letters", 0, kMaxCount);
        info.has_letters = true;
      }
      if (t.has("words")) info.words = t.whole(r, "words", 0, kMaxCount);
    }
    // A wrapped region's later boxes: the characters of its earlier boxes
    // come before them, as many as fit their widths.
    for (const RegionBox& earlier : info.boxes) {
      box.chars_before += char_width_px > 0 ? (earlier.right_px - earlier.left_px) / char_width_px : 0;
    }
    info.boxes.push_back(box);
    info.last_line = std::max(info.last_line, line);
    if (static_cast<int>(L.lines.size()) <= line) L.lines.resize(static_cast<std::size_t>(line) + 1, {1e300, -1e300});
    LineInfo& li = L.lines[static_cast<std::size_t>(line)];
    li.top_px = std::min(li.top_px, box.top_px);
    li.bottom_px = std::max(li.bottom_px, box.bottom_px);
  }
  RegionCatalogue cat;
  for (auto& [key, L] : layouts) {
    for (std::size_t i = 0; i < L.regions.size(); ++i) {
      if (L.regions[i].boxes.empty()) {
        throw InputError({path, 0, "region"}, "item " + key.first + " has no row for region " + std::to_string(i + 1));
      }
    }
    cat.add(std::move(L));
  }
  return cat;
}

RegionCatalogue read_items_file(const std::string& path, const TextLayoutSpec& layout) {
  TsvTable t(path);
  RegionCatalogue cat;
  for (std::size_t r = 0; r < t.rows(); ++r) {
    std::map<int, std::string> roles;
    std::istringstream in(t.text_or(r, "roles", ""));
    std::string pair;
    while (in >> pair) {
      const auto eq = pair.find('=');
      try {
        if (eq == std::string::npos) throw std::invalid_argument("no =");
        roles[std::stoi(pair.substr(0, eq)) - 1] = pair.substr(eq + 1);
      } catch (const std::exception&) {
        throw InputError({path, t.line_of(r), "roles"}, "expected REGION=ROLE pairs separated by spaces, e.g. \"3=target 4=spillover\"");
      }
    }
    try {
      const LaidOutItem item = lay_out_item(t.text(r, "item"), t.text(r, "text"), layout);
      cat.add(region_layout_from_text(item, layout, t.text_or(r, "condition", ""), roles));
    } catch (const std::invalid_argument& e) {
      throw InputError({path, t.line_of(r), "text"}, e.what());
    }
  }
  return cat;
}

RegionCatalogue load_regions(const Protocol& p) {
  const fs::path base = fs::absolute(fs::path(p.path)).parent_path();
  auto resolve = [&](const std::string& f) { return fs::path(f).is_absolute() ? f : (base / f).string(); };
  if (!p.regions.boxes_file.empty()) return read_region_boxes(resolve(p.regions.boxes_file), p.regions.layout.char_width_px);
  if (!p.regions.items_file.empty()) return read_items_file(resolve(p.regions.items_file), p.regions.layout);
  throw InputError({p.path, 0, "regions"}, "the protocol has no [regions] section (boxes_file or items_file)");
}

}  // namespace gazemill
