#include "alignment/compare_corrector.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>
#include <stdexcept>

#include "alignment/dynamic_time_warping.h"

namespace gazemill {

DriftParameters CompareCorrector::parameters() const {
  return {{"gaze_line_break_line_share", p_.gaze_line_break_line_share}, {"candidate_lines", static_cast<double>(p_.candidate_lines)}};
}

DriftCorrector::Assignment CompareCorrector::assign(const DriftInput& input) const {
  const auto& fx = input.fixations;
  const auto& text = input.text;
  const auto& ly = text.line_y_px;
  double widest = 0;
  bool any_words = false;
  for (const auto& words : text.word_x_px) {
    if (words.empty()) continue;
    any_words = true;
    widest = std::max(widest, words.back() - words.front());
  }
  if (!any_words) throw std::invalid_argument("compare needs the word centres of the text's lines");
  // Texts of one-word lines have no width to take a share of; the font height
  // is then the least leftward jump that counts (our choice).
  const double break_px = std::max(p_.gaze_line_break_line_share * widest, text.font_height_px);

  std::vector<int> line(fx.size(), 0);
  double gaze_lines = 0;
  auto place = [&](std::size_t begin, std::size_t end) {  // [begin, end)
    double mean_y = 0;
    for (std::size_t i = begin; i < end; ++i) mean_y += fx[i].y_px;
    mean_y /= static_cast<double>(end - begin);
    std::vector<std::size_t> order(ly.size());
    std::iota(order.begin(), order.end(), 0);
    std::stable_sort(order.begin(), order.end(),
                     [&](std::size_t a, std::size_t b) { return std::abs(ly[a] - mean_y) < std::abs(ly[b] - mean_y); });
    int chosen = static_cast<int>(order.front());
    double best = std::numeric_limits<double>::infinity();
    const std::size_t candidates = std::min<std::size_t>(order.size(), static_cast<std::size_t>(std::max(1, p_.candidate_lines)));
    for (std::size_t c = 0; c < candidates; ++c) {
      const auto& words = text.word_x_px[order[c]];
      if (words.empty()) continue;
      const double cost = dynamic_time_warping(
                              end - begin, words.size(),
                              [&](std::size_t i, std::size_t j) { return std::abs(fx[begin + i].x_px - words[j]); }, false)
                              .cost;
      if (cost < best) {  // strictly: the nearer line keeps a tie
        best = cost;
        chosen = static_cast<int>(order[c]);
      }
    }
    for (std::size_t i = begin; i < end; ++i) line[i] = chosen;
    gaze_lines += 1;
  };
  std::size_t begin = 0;
  for (std::size_t i = 1; i < fx.size(); ++i) {
    if (fx[i - 1].x_px - fx[i].x_px > break_px) {
      place(begin, i);
      begin = i;
    }
  }
  place(begin, fx.size());
  return {std::move(line), {{"gaze_line_count", gaze_lines}}};
}

}  // namespace gazemill
