#pragma once
// Small hand-built pages for the drift-correction tests: lines at given
// centre y, words at given x centres, and fixations placed on chosen words
// with a chosen vertical displacement, so that the true line of every
// fixation is known by construction.

#include <functional>
#include <initializer_list>
#include <utility>
#include <vector>

#include "alignment/drift_input.h"

namespace gazemill::alignment_fixtures {

/// Lines at `line_y_px`, each with the same word centres `word_x_px`.
inline DriftText page(std::vector<double> line_y_px, const std::vector<double>& word_x_px, double line_height_px = 50,
                      double font_height_px = 20) {
  DriftText t;
  t.line_y_px = std::move(line_y_px);
  t.line_height_px = line_height_px;
  t.font_height_px = font_height_px;
  t.word_x_px.assign(t.line_y_px.size(), word_x_px);
  return t;
}

/// A fixation on word `word` of line `line`, displaced vertically by drift(x, line centre y).
struct Visit {
  int line;
  int word;
};

struct Scanpath {
  DriftInput input;
  std::vector<int> true_line;
};

inline Scanpath read(const DriftText& text, const std::vector<Visit>& visits,
                     const std::function<double(double, double)>& drift = [](double, double) { return 0.0; }) {
  Scanpath s;
  s.input.text = text;
  for (const Visit& v : visits) {
    const double x = text.word_x_px[static_cast<std::size_t>(v.line)][static_cast<std::size_t>(v.word)];
    const double y = text.line_y_px[static_cast<std::size_t>(v.line)];
    s.input.fixations.push_back({x, y + drift(x, y), 200});
    s.true_line.push_back(v.line);
  }
  return s;
}

/// Every word of every line once, in reading order.
inline std::vector<Visit> in_order(const DriftText& text) {
  std::vector<Visit> v;
  for (std::size_t l = 0; l < text.line_count(); ++l) {
    for (std::size_t w = 0; w < text.word_x_px[l].size(); ++w) v.push_back({static_cast<int>(l), static_cast<int>(w)});
  }
  return v;
}

inline int count_equal(const std::vector<int>& a, const std::vector<int>& b) {
  int n = 0;
  for (std::size_t i = 0; i < a.size() && i < b.size(); ++i) n += a[i] == b[i] ? 1 : 0;
  return n;
}

}  // namespace gazemill::alignment_fixtures
