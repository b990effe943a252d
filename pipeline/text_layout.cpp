#include "pipeline/text_layout.h"

#include <stdexcept>

namespace gazemill {

double LaidOutItem::line_centre_y(int line, const TextLayoutSpec& spec) const {
  return spec.first_line_top_px + (line + 0.5) * spec.line_height_px;
}

LaidOutItem lay_out_item(const std::string& item, const std::string& marked_text, const TextLayoutSpec& spec) {
  LaidOutItem out;
  out.item = item;
  // Split into regions at '/', keeping each region's text exactly (spaces included).
  std::vector<std::string> parts;
  std::string current;
  for (char c : marked_text) {
    if (c == '/') {
      parts.push_back(current);
      current.clear();
    } else {
      current += c;
    }
  }
  parts.push_back(current);

  // Plain text with the region of every character; collapse the spaces around marks.
  std::vector<int> region_of;
  for (std::size_t r = 0; r < parts.size(); ++r) {
    std::string p = parts[r];
    while (!p.empty() && p.front() == ' ') p.erase(p.begin());
    while (!p.empty() && p.back() == ' ') p.pop_back();
    if (p.empty()) throw std::invalid_argument("item " + item + ": region " + std::to_string(r + 1) + " is empty");
    if (!out.text.empty()) {
      out.text += ' ';
      region_of.push_back(static_cast<int>(r));  // the space before a region belongs to it
    }
    out.text += p;
    region_of.insert(region_of.end(), p.size(), static_cast<int>(r));
  }

  // Words and greedy wrapping at spaces.
  std::vector<std::pair<int, int>> word_spans;
  for (int i = 0; i < static_cast<int>(out.text.size());) {
    if (out.text[i] == ' ') {
      ++i;
      continue;
    }
    int j = i;
    while (j < static_cast<int>(out.text.size()) && out.text[j] != ' ') ++j;
    word_spans.emplace_back(i, j - 1);
    i = j;
  }
  std::vector<int> line_of(out.text.size(), 0), column_of(out.text.size(), 0);
  int line = 0, column = 0;
  std::size_t next_word = 0;
  for (int i = 0; i < static_cast<int>(out.text.size()); ++i) {
    if (next_word < word_spans.size() && word_spans[next_word].first == i) {
      const int len = word_spans[next_word].second - word_spans[next_word].first + 1;
      if (len > spec.wrap_width_chars) throw std::invalid_argument("item " + item + ": a word is longer than a line");
      if (column > 0 && column + len > spec.wrap_width_chars) {
        ++line;
        column = 0;
      }
      ++next_word;
    }
    if (out.text[i] == ' ' && column == 0 && line > 0) {
      // A space at the start of a wrapped line is placed at the end of the previous one.
      line_of[i] = line - 1;
      column_of[i] = -1;
      continue;
    }
    line_of[i] = line;
    column_of[i] = column++;
  }
  // Spaces that wrapped take the column after the previous character.
  for (int i = 0; i < static_cast<int>(out.text.size()); ++i) {
    if (column_of[i] == -1) column_of[i] = i > 0 ? column_of[i - 1] + 1 : 0;
  }
  out.line_count = line + 1;

  for (int i = 0; i < static_cast<int>(out.text.size()); ++i) {
    PlacedChar pc;
    pc.c = out.text[i];
    pc.line = line_of[i];
    pc.column = column_of[i];
    pc.region = region_of[i];
    pc.centre_x_px = spec.left_margin_px + (pc.column + 0.5) * spec.char_width_px;
    pc.centre_y_px = out.line_centre_y(pc.line, spec);
    out.chars.push_back(pc);
  }
  for (const auto& [a, b] : word_spans) {
    Word w;
    w.first_char = a;
    w.last_char = b;
    w.line = line_of[a];
    w.region = region_of[a];
    w.text = out.text.substr(a, b - a + 1);
    out.words.push_back(w);
  }
  for (std::size_t r = 0; r < parts.size(); ++r) {
    Region reg;
    reg.item = item;
    reg.id = static_cast<int>(r);
    bool first = true;
    for (int i = 0; i < static_cast<int>(out.chars.size()); ++i) {
      if (out.chars[i].region != reg.id) continue;
      const PlacedChar& c = out.chars[i];
      const double left = c.centre_x_px - spec.char_width_px / 2, right = c.centre_x_px + spec.char_width_px / 2;
      const double top = spec.first_line_top_px + c.line * spec.line_height_px, bottom = top + spec.line_height_px;
      if (first) {
        reg.first_char = i;
        reg.line = c.line;
        reg.left_px = left;
        reg.top_px = top;
        reg.right_px = right;
        reg.bottom_px = bottom;
        first = false;
      }
      reg.last_char = i;
      reg.left_px = std::min(reg.left_px, left);
      reg.right_px = std::max(reg.right_px, right);
      reg.top_px = std::min(reg.top_px, top);
      reg.bottom_px = std::max(reg.bottom_px, bottom);
    }
    std::string label = out.text.substr(reg.first_char, reg.last_char - reg.first_char + 1);
    while (!label.empty() && label.front() == ' ') label.erase(label.begin());
    reg.label = label;
    for (std::size_t w = 0; w < out.words.size(); ++w) {
      if (out.words[w].region == reg.id) reg.words.push_back(static_cast<int>(w));
    }
    out.regions.push_back(reg);
  }
  return out;
}

}  // namespace gazemill
