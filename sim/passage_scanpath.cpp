#include "sim/passage_scanpath.h"

#include <algorithm>
#include <cmath>

namespace gazemill::sim {

Passage generate_passage(const PassageParams& p, std::mt19937_64& rng) {
  std::uniform_int_distribution<int> line_count(p.min_lines, std::max(p.min_lines, p.max_lines));
  std::poisson_distribution<int> extra_letters(std::max(0.0, p.mean_word_letters - 1.0));
  std::uniform_real_distribution<double> last_share(p.min_last_line_share, 1.0);
  Passage out;
  out.line_spacing_px = p.line_spacing_px;
  out.font_height_px = p.font_height_px;
  out.char_width_px = p.char_width_px;
  out.left_px = p.left_px;
  const int lines = line_count(rng);
  for (int l = 0; l < lines; ++l) {
    out.line_y_px.push_back(p.first_line_y_px + l * p.line_spacing_px);
    const int width = l + 1 == lines ? std::max(1, static_cast<int>(p.line_width_chars * last_share(rng))) : p.line_width_chars;
    std::vector<PassageWord> words;
    int column = 0;
    while (true) {
      const int letters = std::min(p.max_word_letters, 1 + extra_letters(rng));
      if (column + letters > width && !words.empty()) break;
      PassageWord w;
      w.letters = letters;
      w.left_px = p.left_px + column * p.char_width_px;
      w.right_px = w.left_px + letters * p.char_width_px;
      words.push_back(w);
      column += letters + 1;  // one space between words
    }
    out.words.push_back(std::move(words));
  }
  return out;
}

Passage passage_from_layout(const LaidOutItem& item, const TextLayoutSpec& spec) {
  Passage out;
  out.line_spacing_px = spec.line_height_px;
  // The glyphs' height is not part of a layout; half the line height is a
  // usual proportion for text set with generous spacing (our choice).
  out.font_height_px = 0.5 * spec.line_height_px;
  out.char_width_px = spec.char_width_px;
  out.left_px = spec.left_margin_px;
  for (int l = 0; l < item.line_count; ++l) out.line_y_px.push_back(item.line_centre_y(l, spec));
  out.words.resize(static_cast<std::size_t>(item.line_count));
  for (const Word& w : item.words) {
    const PlacedChar& first = item.chars[static_cast<std::size_t>(w.first_char)];
    const PlacedChar& last = item.chars[static_cast<std::size_t>(w.last_char)];
    PassageWord pw;
    pw.letters = w.length();
    pw.left_px = first.left_px;
    pw.right_px = last.left_px + last.width_px;
    out.words[static_cast<std::size_t>(w.line)].push_back(pw);
  }
  return out;
}

namespace {

class Reader {
 public:
  Reader(const Passage& passage, const PassageReaderParams& r, std::mt19937_64& rng)
      : passage_(passage), r_(r), rng_(rng), landing_(0.0, r.landing_sd_chars), duration_(r.duration_mean_ms, r.duration_sd_ms) {}

  void fixate(int line, int word, double landing_share) {
    const PassageWord& w = passage_.words[static_cast<std::size_t>(line)][static_cast<std::size_t>(word)];
    const double width = w.right_px - w.left_px;
    SimulatedFixation f;
    f.x_px = std::clamp(w.left_px + landing_share * width + landing_(rng_) * passage_.char_width_px, w.left_px, w.right_px);
    f.true_line = line;
    f.true_y_px = passage_.line_y_px[static_cast<std::size_t>(line)];
    f.y_px = f.true_y_px;
    f.true_word = word;
    f.duration_ms = std::max(r_.min_duration_ms, duration_(rng_));
    out_.push_back(f);
  }
  bool chance(double p) { return uniform_(rng_) < p; }
  int pick(int lo, int hi) { return std::uniform_int_distribution<int>(lo, hi)(rng_); }
  std::vector<SimulatedFixation> take() { return std::move(out_); }

 private:
  const Passage& passage_;
  const PassageReaderParams& r_;
  std::mt19937_64& rng_;
  std::normal_distribution<double> landing_;
  std::normal_distribution<double> duration_;
  std::uniform_real_distribution<double> uniform_{0.0, 1.0};
  std::vector<SimulatedFixation> out_;
};

}  // namespace

std::vector<SimulatedFixation> generate_passage_scanpath(const Passage& passage, const PassageReaderParams& r,
                                                         const ScanpathDistortion& d, std::mt19937_64& rng) {
  Reader reader(passage, r, rng);
  const int lines = static_cast<int>(passage.line_y_px.size());
  auto skip_probability = [&](int letters) { return letters <= 3 ? r.skip_short : letters <= 6 ? r.skip_medium : r.skip_long; };
  for (int line = 0; line < lines; ++line) {
    const auto& words = passage.words[static_cast<std::size_t>(line)];
    const int n = static_cast<int>(words.size());
    // w: the next word not yet read in the first pass; last: the word of the
    // latest first-pass fixation.
    int w = 1, last = 0;
    if (line > 0 && n > 1 && reader.chance(r.sweep_undershoot)) {
      reader.fixate(line, 1, r.landing_share);
      last = 1;
      if (reader.chance(r.sweep_correction)) {
        reader.fixate(line, 0, r.landing_share);
        last = 0;
      }
      w = 2;
    } else {
      reader.fixate(line, 0, r.landing_share);
    }
    auto after_first_pass_fixation = [&](int current) {
      if (line > 0 && reader.chance(d.between_line_regression_probability)) {
        const int back_line = reader.chance(0.6) ? line - 1 : reader.pick(0, line - 1);
        const auto& back_words = passage.words[static_cast<std::size_t>(back_line)];
        const int start = reader.pick(0, static_cast<int>(back_words.size()) - 1);
        const int count = std::min(reader.pick(1, 3), static_cast<int>(back_words.size()) - start);
        for (int k = 0; k < count; ++k) reader.fixate(back_line, start + k, r.landing_share);
      } else if (current > 0 && reader.chance(d.within_line_regression_probability)) {
        reader.fixate(line, current - reader.pick(1, std::min(3, current)), r.landing_share);
      }
    };
    after_first_pass_fixation(last);
    while (w < n) {
      if (w + 1 < n && reader.chance(skip_probability(words[static_cast<std::size_t>(w)].letters))) ++w;
      reader.fixate(line, w, r.landing_share);
      if (words[static_cast<std::size_t>(w)].letters >= 8 && reader.chance(r.refixation_long)) {
        reader.fixate(line, w, std::min(0.9, r.landing_share + 0.35));
      }
      after_first_pass_fixation(w);
      ++w;
    }
  }
  std::vector<SimulatedFixation> out = reader.take();
  std::normal_distribution<double> noise(0.0, 1.0);
  const double y0 = passage.line_y_px.empty() ? 0.0 : passage.line_y_px.front();
  for (auto& f : out) {
    // Draw the noise even when its SD is zero, so that a scanpath's fixations
    // do not depend on whether noise is simulated.
    const double e = noise(rng) * d.noise_sd_px;
    f.y_px = f.true_y_px + d.offset_px + d.slope * (f.x_px - passage.left_px) + d.shift * (f.true_y_px - y0) + e;
  }
  return out;
}

}  // namespace gazemill::sim
