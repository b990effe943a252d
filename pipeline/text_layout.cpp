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
  std::vector<int> region_of;  // per character of the plain text
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
  // Greedy wrapping by width: a word that would cross wrap_width_px starts a new
  // line. The decision falls on the word's first letter, so the space before it
  // stays at the end of the previous line.
  const int n = static_cast<int>(out.text.size());
  std::vector<int> line_of(out.text.size(), 0), column_of(out.text.size(), 0);
  std::vector<double> left_of(out.text.size(), 0.0);
  int line = 0, column = 0;
  double x = 0;
  std::size_t next_word = 0;
  for (int i = 0; i < n; ++i) {
    if (next_word < word_spans.size() && word_spans[next_word].first == i) {
      double width = 0;
      for (int k = word_spans[next_word].first; k <= word_spans[next_word].second; ++k) width += spec.advance(out.text[k]);
      if (width > spec.wrap_width_px()) throw std::invalid_argument("item " + item + ": a word is longer than a line");
      if (column > 0 && x + width > spec.wrap_width_px() + 1e-9) {
        ++line;
        column = 0;
        x = 0;
      }
      ++next_word;
    }
    line_of[i] = line;
    column_of[i] = column++;
    left_of[i] = x;
    x += spec.advance(out.text[i]);
  }
  out.line_count = line + 1;

  for (int i = 0; i < n; ++i) {
    PlacedChar pc;
    pc.c = out.text[i];
    pc.line = line_of[i];
    pc.column = column_of[i];
    pc.region = region_of[i];
    pc.left_px = spec.left_margin_px + left_of[i];
    pc.width_px = spec.advance(pc.c);
    pc.centre_x_px = pc.left_px + pc.width_px / 2;
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
    reg.first_char = -1;
    bool boxed = false;
    for (int i = 0; i < static_cast<int>(out.chars.size()); ++i) {
      if (out.chars[i].region != reg.id) continue;
      const PlacedChar& c = out.chars[i];
      if (reg.first_char < 0) reg.first_char = i;
      reg.last_char = i;
      // A space left at the end of a line before a wrapped word is text, not part of the box.
      const bool trailing_space = c.c == ' ' && i + 1 < static_cast<int>(out.chars.size()) && out.chars[i + 1].line != c.line;
      if (trailing_space) continue;
      const double left = c.left_px, right = c.left_px + c.width_px;
      const double top = spec.first_line_top_px + c.line * spec.line_height_px, bottom = top + spec.line_height_px;
      if (!boxed) {
        reg.line = c.line;
        reg.left_px = left;
        reg.top_px = top;
        reg.right_px = right;
        reg.bottom_px = bottom;
        boxed = true;
      }
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
