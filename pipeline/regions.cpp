#include "pipeline/regions.h"

#include <algorithm>

namespace gazemill {

RegionLayout region_layout_from_text(const LaidOutItem& item, const TextLayoutSpec& spec, const std::vector<std::string>& levels,
                                     const std::map<int, std::string>& roles) {
  RegionLayout out;
  out.item = item.item;
  out.levels = levels;
  out.char_width_px = spec.char_width_px;
  for (int l = 0; l < item.line_count; ++l) {
    const double top = spec.first_line_top_px + l * spec.line_height_px;
    out.lines.push_back({top, top + spec.line_height_px});
  }
  for (const Region& r : item.regions) {
    RegionInfo info;
    info.id = r.id;
    info.label = r.label;
    if (auto it = roles.find(r.id); it != roles.end()) info.role = it->second;
    info.line = r.line;
    info.words = static_cast<int>(r.words.size());
    info.has_letters = true;
    int first_letter = -1;  // index of the region's first letter
    // One box per line the region covers, from its characters.
    bool first_box = true;
    for (int c = r.first_char; c <= r.last_char; ++c) {
      const PlacedChar& ch = item.chars[static_cast<std::size_t>(c)];
      // A space left at the end of a line before a wrapped word is not part of any box.
      const bool trailing_space = ch.c == ' ' && c + 1 < static_cast<int>(item.chars.size()) &&
                                  item.chars[static_cast<std::size_t>(c + 1)].line != ch.line;
      if (trailing_space) continue;
      if (first_box) {
        info.line = ch.line;
        first_box = false;
      }
      const double left = ch.left_px, right = ch.left_px + ch.width_px;
      if (info.boxes.empty() || info.boxes.back().line != ch.line) {
        const LineInfo& line = out.lines[static_cast<std::size_t>(ch.line)];
        const double before = first_letter < 0 ? 0 : c - first_letter;
        info.boxes.push_back({ch.line, left, line.top_px, right, line.bottom_px, left, before});
      }
      RegionBox& b = info.boxes.back();
      b.left_px = std::min(b.left_px, left);
      b.right_px = std::max(b.right_px, right);
      if (ch.c != ' ') {
        ++info.letters;
        if (first_letter < 0) {
          first_letter = c;
          b.first_letter_left_px = left;
        }
      }
    }
    info.last_line = info.boxes.empty() ? info.line : info.boxes.back().line;
    out.regions.push_back(info);
  }
  out.word_centre_x_px.assign(out.lines.size(), {});
  for (const Word& w : item.words) {
    const PlacedChar& a = item.chars[static_cast<std::size_t>(w.first_char)];
    const PlacedChar& b = item.chars[static_cast<std::size_t>(w.last_char)];
    out.word_centre_x_px[static_cast<std::size_t>(w.line)].push_back(0.5 * (a.left_px + b.left_px + b.width_px));
  }
  return out;
}

void RegionCatalogue::add(RegionLayout layout) {
  auto key = std::make_pair(layout.item, layout.levels);
  layouts_[key] = std::move(layout);
}

const RegionLayout* RegionCatalogue::find(const std::string& item, const std::map<std::string, std::string>& variables) const {
  std::vector<std::string> levels;
  for (const auto& f : factors_) {
    const auto it = variables.find(f);
    levels.push_back(it == variables.end() ? std::string() : it->second);
  }
  const auto it = layouts_.find({item, levels});
  return it == layouts_.end() ? nullptr : &it->second;
}

std::string RegionCatalogue::describe(const std::string& item, const std::map<std::string, std::string>& variables) const {
  std::string out = "item " + item;
  for (std::size_t i = 0; i < factors_.size(); ++i) {
    const auto it = variables.find(factors_[i]);
    out += (i == 0 ? " with " : ", ") + factors_[i] + "=" + (it == variables.end() ? std::string("(none)") : it->second);
  }
  return out;
}

}  // namespace gazemill
