#pragma once
// Invented multi-line passages and reading scanpaths over them, with the
// distortions Carr et al. (2022, Behavior Research Methods 54(1)) simulate to
// compare drift-correction methods: noise, slope, shift, offset, and within-
// and between-line regressions, one at a time or mixed. Every fixation keeps
// its true line. Seeded and deterministic: the same generator state gives the
// same passage and scanpath. For the drift benchmark and the study
// simulator, which reads real laid-out text through passage_from_layout;
// tests of drift correction take their expected values elsewhere.

#include <random>
#include <vector>

#include "pipeline/text_layout.h"

namespace gazemill::sim {

/// Words of random length in a monospaced font, filling lines left to right.
/// All lengths in px; every default is our choice.
struct PassageParams {
  int min_lines = 5;
  int max_lines = 12;
  int line_width_chars = 70;      // a word that would end past this starts a new line
  double char_width_px = 12.0;
  double font_height_px = 20.0;
  double line_spacing_px = 50.0;  // from one line's centre to the next
  double left_px = 100.0;         // left edge of every line
  double first_line_y_px = 150.0; // centre of the first line
  // Word lengths: 1 + Poisson(mean_word_letters - 1), at most max_word_letters
  // (English running text averages about 4.5-5 letters, from memory).
  double mean_word_letters = 5.0;
  int max_word_letters = 14;
  // The last line is filled to a random share of the width, at least this.
  double min_last_line_share = 0.3;
};

struct PassageWord {
  int letters = 0;
  double left_px = 0;
  double right_px = 0;
  double centre_x_px() const { return 0.5 * (left_px + right_px); }
};

struct Passage {
  std::vector<double> line_y_px;                // centre of each line, top to bottom
  std::vector<std::vector<PassageWord>> words;  // per line, left to right
  double line_spacing_px = 0;
  double font_height_px = 0;
  double char_width_px = 0;
  double left_px = 0;
};

/// Lines drawn uniformly from min_lines..max_lines (5-12 by default).
Passage generate_passage(const PassageParams& params, std::mt19937_64& rng);

/// Laid-out text as a passage: its lines' centres and every word's box
/// (from its first letter's left edge to its last letter's right edge). Word
/// w of line l is word (words on the lines before l) + w of `item`.
Passage passage_from_layout(const LaidOutItem& item, const TextLayoutSpec& spec);

/// How the simulated reader reads when nothing distorts it; probabilities per
/// word, every default our choice, roughly the size of the skipping and
/// refixation rates Rayner (1998) reviews (from memory).
struct PassageReaderParams {
  double skip_short = 0.4;         // words of 1-3 letters
  double skip_medium = 0.15;       // 4-6 letters
  double skip_long = 0.05;         // 7 letters or more
  double refixation_long = 0.3;    // a second fixation on a word of 8 letters or more
  double landing_share = 0.4;      // preferred landing place, as a share of the word from its left edge
  double landing_sd_chars = 0.7;
  // Return sweeps land on the line's second word this often (undershoot)...
  double sweep_undershoot = 0.3;
  // ...and are then followed by a corrective fixation on the first word this often.
  double sweep_correction = 0.5;
  double duration_mean_ms = 220.0;
  double duration_sd_ms = 60.0;
  double min_duration_ms = 80.0;
};

/// The distortions, each zero by default (no distortion). Observed y =
/// line centre + offset_px + slope * (x - left edge) + shift * (line centre -
/// first line centre) + N(0, noise_sd_px). The ranges are what bench/align
/// sweeps; Carr et al. swept each from zero to a maximum (from memory, not
/// their exact values).
struct ScanpathDistortion {
  double noise_sd_px = 0;        // vertical noise per fixation; 0 .. 0.4 line spacings
  double slope = 0;              // px of drift per px right of the left edge; -0.1 .. 0.1
  double shift = 0;              // px of drift per px below the first line; -0.2 .. 0.2
  double offset_px = 0;          // the same for every fixation; -1 .. 1 line spacings
  // After each first-pass fixation, from the passage's second line on: a jump back
  // to an earlier line, reading 1-3 words there, then back to where reading
  // left off (0 .. 1)...
  double between_line_regression_probability = 0;
  // ...otherwise, from a line's second word on: a jump back 1-3 words on the
  // same line, then on to the next unread word (0 .. 1).
  double within_line_regression_probability = 0;
};

struct SimulatedFixation {
  double x_px = 0;
  double y_px = 0;          // as recorded: the true y distorted
  double duration_ms = 0;
  int true_line = 0;        // 0-based
  double true_y_px = 0;     // the true line's centre
  int true_word = 0;        // index within its line
};

/// One reading of the passage, start to end, in time order.
std::vector<SimulatedFixation> generate_passage_scanpath(const Passage& passage, const PassageReaderParams& reader,
                                                         const ScanpathDistortion& distortion, std::mt19937_64& rng);

}  // namespace gazemill::sim
