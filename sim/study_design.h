#pragma once
// The design of a simulated reading experiment: factors with any number of
// levels (the cells are their product), sentence items seen once per
// participant in one cell, counterbalanced over lists by a Latin square, and
// an optional block of passages that every list reads alike.

#include <cstddef>
#include <string>
#include <vector>

namespace gazemill::sim {

/// How one level of a factor changes the reading of the target region (and
/// the region after it), relative to the reader's baseline. Effects of the
/// levels a trial is in add up (skipping odds multiply): the design is
/// additive by construction.
struct TargetEffect {
  double fixation_ms = 0;        // added to the mean of every fixation on the target
  double first_fixation_ms = 0;  // added to the first fixation on the target only
  double spillover_ms = 0;       // added to every fixation on the region after the target
  double skip_factor = 1;        // multiplies the target's skipping probability
  double refixation = 0;         // added to the target's refixation probability
  TargetEffect& operator+=(const TargetEffect& o);
};

struct FactorLevel {
  std::string name;
  TargetEffect effect;
};

struct Factor {
  std::string name;  // a trial variable: letters, digits and '_', starting with a letter
  std::vector<FactorLevel> levels;
  // The levels show different text (the target's variants); at most one factor
  // of a design may. A factor that does not (e.g. the preview of a boundary
  // paradigm) leaves the final text alike in every level.
  bool changes_text = false;
};

/// A sentence item: its text with '/' between regions. The target region is
/// written [variant|variant|...], one variant per level of the text factor, in
/// the levels' order; the region after it is the spillover region.
struct SentenceItem {
  std::string id;
  std::string marked_text;
};

/// A passage: plain text, every word a region. Passages have no target and
/// no levels of the design's factors.
struct PassageItem {
  std::string id;
  std::string text;
};

struct StudyDesign {
  std::string name = "study";
  std::string task = "reading";
  std::vector<Factor> factors;
  std::vector<SentenceItem> items;
  std::vector<PassageItem> passages;
  int participants = 4;
  // Comprehension questions: after this share of the trials (chosen at random
  // per participant), answered correctly with a probability drawn per
  // participant from a normal distribution, clamped.
  double question_share = 1.0 / 3.0;
  double accuracy_mean = 0.88;
  double accuracy_sd = 0.06;
  double accuracy_min = 0.55;
  double accuracy_max = 0.99;

  /// The product of the factors' level counts (1 without factors).
  std::size_t cells() const;
  /// The level of every factor in cell `cell`, the first factor varying slowest.
  std::vector<std::size_t> levels_of(std::size_t cell) const;
  /// "rare, invalid"-style names of a cell's levels, in factor order.
  std::vector<std::string> level_names(std::size_t cell) const;
  /// Counterbalancing lists: one per cell.
  std::size_t lists() const { return cells(); }
  /// Index of the factor whose levels change the text, or -1.
  int text_factor() const;
  /// The summed effect of a cell's levels on the target.
  TargetEffect effect_of(std::size_t cell) const;
  /// Throws std::invalid_argument naming what is wrong (names, levels, item ids, variants).
  void validate() const;
};

/// Latin square: list `list` (0-based) sees sentence item `item` (0-based) in cell (item + list) mod cells.
std::size_t cell_for(std::size_t list, std::size_t item, std::size_t cells);
/// Participants fill the lists in turn: participant p (0-based) is in list p mod lists.
std::size_t list_of(std::size_t participant, std::size_t lists);

/// The text of `item` in variant `variant` (a level of the text factor) and
/// the index (0-based) of its target region, -1 when the item has no [..|..] region.
struct ResolvedItem {
  std::string marked_text;
  int target_region = -1;
};
ResolvedItem resolve_item(const SentenceItem& item, std::size_t variant);

/// A passage's text with '/' between its words: every word a region.
std::string passage_marked_text(const PassageItem& passage);

/// The bundled texts: short news reports from a harbour town, written for gazemill.
const std::vector<SentenceItem>& bundled_sentence_items();
const std::vector<PassageItem>& bundled_passages();

/// The demo study's 2 x 2 design (target word frequency x parafoveal preview)
/// over the first `items` bundled sentence items and the first `passages`
/// bundled passages. Throws std::invalid_argument when more are asked for
/// than are bundled.
StudyDesign demo_design(std::size_t items = 12, std::size_t passages = 0);

}  // namespace gazemill::sim
