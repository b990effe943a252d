#include "io/region_files.h"

#include <algorithm>
#include <cctype>
#include <filesystem>
#include <map>
#include <set>
#include <sstream>

#include "io/tsv_table.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {
constexpr int kMaxRegionsPerItem = 10000;
constexpr int kMaxLinesPerItem = 1000;
constexpr int kMaxCount = 1000000;  // letters or words of one region
// The design factors among a file's columns (in the design's order); any
// column that is neither one of `known` nor a factor is an error.
std::vector<std::string> factor_columns(const TsvTable& t, const std::set<std::string>& known, const std::vector<std::string>& factors) {
  std::vector<std::string> present;
  for (const auto& c : t.columns()) {
    if (known.count(c)) continue;
    if (std::find(factors.begin(), factors.end(), c) == factors.end()) {
      std::string listed;
      for (const auto& f : factors) listed += (listed.empty() ? "" : ", ") + f;
      throw InputError({t.path(), 1, c}, "the column '" + c + "' is neither a column of this file nor a factor of the design ([design] factors: " +
                                             (listed.empty() ? std::string("none") : listed) + ")");
    }
  }
  for (const auto& f : factors) {
    if (t.has(f)) present.push_back(f);
  }
  return present;
}

// A role is a name a rule and the tables use: "target," is a typo, not a role.
bool role_name_ok(const std::string& role) {
  if (role.empty()) return false;
  return std::all_of(role.begin(), role.end(), [](char c) { return std::isalnum(static_cast<unsigned char>(c)) || c == '_' || c == '-'; });
}

std::vector<std::string> levels_of(const TsvTable& t, std::size_t row, const std::vector<std::string>& factors) {
  std::vector<std::string> levels;
  for (const auto& f : factors) levels.push_back(t.text(row, f));
  return levels;
}

}  // namespace

RegionCatalogue read_region_boxes(const std::string& path, double char_width_px, const std::vector<std::string>& design_factors) {
  TsvTable t(path);
  const auto factors = factor_columns(
      t, {"item", "region", "label", "left_px", "top_px", "right_px", "bottom_px", "line", "role", "letters", "words"}, design_factors);
  std::map<std::pair<std::string, std::vector<std::string>>, RegionLayout> layouts;
  // Each box's row line, to name both rows of two boxes that overlap.
  std::map<std::pair<std::string, std::vector<std::string>>, std::vector<std::pair<RegionBox, std::size_t>>> placed;
  for (std::size_t r = 0; r < t.rows(); ++r) {
    const std::string item = t.text(r, "item");
    const std::vector<std::string> levels = levels_of(t, r, factors);
    RegionLayout& L = layouts[{item, levels}];
    L.item = item;
    L.levels = levels;
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
      if (!info.role.empty() && !role_name_ok(info.role)) {
        throw InputError({path, t.line_of(r), "role"}, "the role '" + info.role + "' is not a name: letters, digits, _ and - only");
      }
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
    // Boxes that overlap would give a fixation two regions; a duplicated row is such a box.
    auto& boxes = placed[{item, levels}];
    for (const auto& [other, other_line] : boxes) {
      if (other.line == box.line && box.left_px < other.right_px && other.left_px < box.right_px && box.top_px < other.bottom_px &&
          other.top_px < box.bottom_px) {
        throw InputError({path, t.line_of(r), "left_px"}, "this box of item " + item + ", region " + std::to_string(region + 1) +
                                                              ", overlaps the box of line " + std::to_string(other_line) +
                                                              " of this file; a fixation there would be in two regions");
      }
    }
    boxes.emplace_back(box, t.line_of(r));
    info.boxes.push_back(box);
    info.last_line = std::max(info.last_line, line);
    if (static_cast<int>(L.lines.size()) <= line) L.lines.resize(static_cast<std::size_t>(line) + 1, {1e300, -1e300});
    LineInfo& li = L.lines[static_cast<std::size_t>(line)];
    li.top_px = std::min(li.top_px, box.top_px);
    li.bottom_px = std::max(li.bottom_px, box.bottom_px);
  }
  RegionCatalogue cat(factors, path);
  for (auto& [key, L] : layouts) {
    // Words are unknown in a boxes file: each box stands for the words it holds.
    L.word_centre_x_px.assign(L.lines.size(), {});
    for (const auto& r : L.regions) {
      for (const auto& b : r.boxes) L.word_centre_x_px[static_cast<std::size_t>(b.line)].push_back(0.5 * (b.left_px + b.right_px));
    }
    for (auto& line : L.word_centre_x_px) std::sort(line.begin(), line.end());
    std::map<std::string, std::size_t> role_region;
    for (std::size_t i = 0; i < L.regions.size(); ++i) {
      if (L.regions[i].boxes.empty()) {
        throw InputError({path, 0, "region"}, "item " + key.first + " has no row for region " + std::to_string(i + 1));
      }
      const std::string& role = L.regions[i].role;
      if (role.empty()) continue;
      if (const auto [at, fresh] = role_region.emplace(role, i); !fresh) {
        throw InputError({path, 0, "role"}, "item " + key.first + " gives the role '" + role + "' to regions " + std::to_string(at->second + 1) +
                                                " and " + std::to_string(i + 1) + "; a role names one region of an item");
      }
    }
    cat.add(std::move(L));
  }
  return cat;
}

RegionCatalogue read_items_file(const std::string& path, const TextLayoutSpec& layout, const std::vector<std::string>& design_factors) {
  TsvTable t(path);
  const auto factors = factor_columns(t, {"item", "text", "roles"}, design_factors);
  RegionCatalogue cat(factors, path);
  std::map<std::pair<std::string, std::vector<std::string>>, std::size_t> seen;  // item and levels -> line
  for (std::size_t r = 0; r < t.rows(); ++r) {
    const auto [first, fresh] = seen.emplace(std::make_pair(t.text(r, "item"), levels_of(t, r, factors)), t.line_of(r));
    if (!fresh) {
      std::string cell;
      for (const auto& level : first->first.second) cell += (cell.empty() ? " in cell " : "/") + level;
      throw InputError({path, t.line_of(r), "item"}, "item " + first->first.first + cell + " has a row already, at line " +
                                                         std::to_string(first->second) + "; each item (and design cell) has one text");
    }
    std::map<int, std::string> roles;
    std::map<std::string, int> role_region;
    std::istringstream in(t.text_or(r, "roles", ""));
    std::string pair;
    while (in >> pair) {
      const auto eq = pair.find('=');
      int region = 0;
      try {
        if (eq == std::string::npos) throw std::invalid_argument("no =");
        region = std::stoi(pair.substr(0, eq)) - 1;
      } catch (const std::exception&) {
        throw InputError({path, t.line_of(r), "roles"}, "expected REGION=ROLE pairs separated by spaces, e.g. \"3=target 4=spillover\"");
      }
      const std::string role = pair.substr(eq + 1);
      if (!role_name_ok(role)) {
        throw InputError({path, t.line_of(r), "roles"}, "the role '" + role + "' of region " + std::to_string(region + 1) +
                                                            " is not a name: letters, digits, _ and - only (roles are separated by spaces)");
      }
      if (roles.count(region)) {
        throw InputError({path, t.line_of(r), "roles"}, "region " + std::to_string(region + 1) + " is given two roles, '" + roles[region] + "' and '" +
                                                            role + "'");
      }
      if (role_region.count(role)) {
        throw InputError({path, t.line_of(r), "roles"}, "the role '" + role + "' is given to regions " + std::to_string(role_region[role] + 1) +
                                                            " and " + std::to_string(region + 1) + "; a role names one region of an item");
      }
      roles[region] = role;
      role_region[role] = region;
    }
    LaidOutItem item;
    try {
      item = lay_out_item(t.text(r, "item"), t.text(r, "text"), layout);
    } catch (const std::invalid_argument& e) {
      throw InputError({path, t.line_of(r), "text"}, e.what());
    }
    for (const auto& [region, role] : roles) {
      if (region < 0 || region >= static_cast<int>(item.regions.size())) {
        throw InputError({path, t.line_of(r), "roles"}, "role '" + role + "' is given to region " + std::to_string(region + 1) + ", but item " +
                                                            item.item + " has " + std::to_string(item.regions.size()) + " regions");
      }
    }
    cat.add(region_layout_from_text(item, layout, levels_of(t, r, factors), roles));
  }
  return cat;
}

namespace {
std::string resolve_beside(const Protocol& p, const std::string& f) {
  const fs::path base = fs::absolute(fs::path(p.path)).parent_path();
  return fs::path(f).is_absolute() ? f : (base / f).string();
}
}  // namespace

std::vector<ItemText> read_item_texts(const std::string& path, const std::vector<std::string>& design_factors) {
  TsvTable t(path);
  const auto factors = factor_columns(t, {"item", "text", "roles"}, design_factors);
  std::vector<ItemText> out;
  for (std::size_t r = 0; r < t.rows(); ++r) out.push_back({t.text(r, "item"), levels_of(t, r, factors), t.text(r, "text")});
  return out;
}

std::vector<ItemText> load_item_texts(const Protocol& p) {
  if (!p.regions.boxes_file.empty() || p.regions.items_file.empty()) return {};
  return read_item_texts(resolve_beside(p, p.regions.items_file), p.design.factors);
}

std::string regions_file(const Protocol& p) {
  if (!p.regions.boxes_file.empty()) return resolve_beside(p, p.regions.boxes_file);
  if (!p.regions.items_file.empty()) return resolve_beside(p, p.regions.items_file);
  return "";
}

RegionCatalogue load_regions(const Protocol& p) {
  auto resolve = [&](const std::string& f) { return resolve_beside(p, f); };
  if (!p.regions.boxes_file.empty()) return read_region_boxes(resolve(p.regions.boxes_file), p.regions.layout.char_width_px, p.design.factors);
  if (!p.regions.items_file.empty()) return read_items_file(resolve(p.regions.items_file), p.regions.layout, p.design.factors);
  throw InputError({p.path, 0, "regions"}, "the protocol has no [regions] section (boxes_file or items_file)");
}

}  // namespace gazemill
