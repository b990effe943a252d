#pragma once
// Items as text on the screen: where every character, word and region lies.
// A region is a stretch of an item's text between '/' marks; a monospaced
// font is described by one character width (px).

#include <map>
#include <string>
#include <vector>

namespace gazemill {

/// Screen layout of item text. All lengths in px, origin at the screen's top left.
struct TextLayoutSpec {
  double char_width_px = 12.0;        // a monospaced font's advance; the unit of landing positions
  double line_height_px = 40.0;
  double left_margin_px = 100.0;
  double first_line_top_px = 200.0;   // top of the first line's box
  int wrap_width_chars = 80;          // lines break at spaces before wrap_width_chars x char_width_px
  // A proportional font: the advance of each character that differs from char_width_px.
  std::map<char, double> advance_px;
  double advance(char c) const {
    auto it = advance_px.find(c);
    return it == advance_px.end() ? char_width_px : it->second;
  }
  double wrap_width_px() const { return wrap_width_chars * char_width_px; }
};

struct Word {
  int first_char = 0;  // index into the item's laid-out text
  int last_char = 0;   // inclusive
  int line = 0;
  int region = 0;
  std::string text;
  int length() const { return last_char - first_char + 1; }
};

struct Region {
  std::string item;
  int id = 0;            // 0-based order in the text
  std::string label;     // the region's text, trimmed
  double left_px = 0, top_px = 0, right_px = 0, bottom_px = 0;
  int line = 0;          // line of its first character
  int first_char = 0;    // inclusive
  int last_char = 0;     // inclusive
  std::vector<int> words;  // indices into LaidOutItem::words
};

/// One character on screen.
struct PlacedChar {
  char c = ' ';
  int line = 0;
  int column = 0;
  int region = 0;
  double left_px = 0;
  double width_px = 0;
  double centre_x_px = 0;
  double centre_y_px = 0;
};

struct LaidOutItem {
  std::string item;
  std::string text;               // without the '/' marks
  std::vector<PlacedChar> chars;  // one per character of text
  std::vector<Word> words;
  std::vector<Region> regions;
  int line_count = 0;
  double line_centre_y(int line, const TextLayoutSpec& spec) const;
};

/// Lays out `marked_text` ('/' between regions) with word wrapping. A region
/// that wraps onto the next line keeps the box of its first line's part
/// extended to cover both (its bounding box), and its `line` is its first line.
/// Throws std::invalid_argument on an empty region or a word longer than a line.
LaidOutItem lay_out_item(const std::string& item, const std::string& marked_text, const TextLayoutSpec& spec);

}  // namespace gazemill
