#include "sim/study_design.h"

#include <cctype>
#include <set>
#include <stdexcept>

namespace gazemill::sim {

TargetEffect& TargetEffect::operator+=(const TargetEffect& o) {
  fixation_ms += o.fixation_ms;
  first_fixation_ms += o.first_fixation_ms;
  spillover_ms += o.spillover_ms;
  skip_factor *= o.skip_factor;
  refixation += o.refixation;
  return *this;
}

std::size_t StudyDesign::cells() const {
  std::size_t n = 1;
  for (const auto& f : factors) n *= f.levels.size();
  return n;
}

std::vector<std::size_t> StudyDesign::levels_of(std::size_t cell) const {
  std::vector<std::size_t> out(factors.size(), 0);
  for (std::size_t f = factors.size(); f-- > 0;) {
    const std::size_t n = factors[f].levels.size();
    out[f] = cell % n;
    cell /= n;
  }
  return out;
}

std::vector<std::string> StudyDesign::level_names(std::size_t cell) const {
  std::vector<std::string> out;
  const auto levels = levels_of(cell);
  for (std::size_t f = 0; f < factors.size(); ++f) out.push_back(factors[f].levels[levels[f]].name);
  return out;
}

int StudyDesign::text_factor() const {
  for (std::size_t f = 0; f < factors.size(); ++f) {
    if (factors[f].changes_text) return static_cast<int>(f);
  }
  return -1;
}

TargetEffect StudyDesign::effect_of(std::size_t cell) const {
  TargetEffect e;
  const auto levels = levels_of(cell);
  for (std::size_t f = 0; f < factors.size(); ++f) e += factors[f].levels[levels[f]].effect;
  return e;
}

namespace {

// A name the protocol can capture: (?<name>...) takes letters, digits and '_'.
bool capture_name(const std::string& s) {
  if (s.empty() || !std::isalpha(static_cast<unsigned char>(s[0]))) return false;
  for (char c : s) {
    if (!std::isalnum(static_cast<unsigned char>(c)) && c != '_') return false;
  }
  return true;
}

// Words the messages and the protocol's patterns read as one field (\S+).
bool one_word(const std::string& s) {
  if (s.empty()) return false;
  for (char c : s) {
    if (std::isspace(static_cast<unsigned char>(c)) || c == '/' || c == '[' || c == ']' || c == '|') return false;
  }
  return true;
}

std::vector<std::string> variants_of(const SentenceItem& item, std::size_t& open, std::size_t& close) {
  open = item.marked_text.find('[');
  close = std::string::npos;
  std::vector<std::string> variants;
  if (open == std::string::npos) return variants;
  close = item.marked_text.find(']', open);
  if (close == std::string::npos) throw std::invalid_argument("item " + item.id + ": '[' without ']'");
  std::string v;
  for (std::size_t i = open + 1; i < close; ++i) {
    if (item.marked_text[i] == '|') {
      variants.push_back(v);
      v.clear();
    } else {
      v += item.marked_text[i];
    }
  }
  variants.push_back(v);
  return variants;
}

}  // namespace

void StudyDesign::validate() const {
  std::set<std::string> names = {"item", "block", "list", "answer_correct", "trial"};
  int text_factors = 0;
  for (const auto& f : factors) {
    if (!capture_name(f.name)) throw std::invalid_argument("factor name '" + f.name + "': letters, digits and '_', starting with a letter");
    if (!names.insert(f.name).second) throw std::invalid_argument("factor name '" + f.name + "' is taken (by another factor or a trial variable)");
    if (f.levels.size() < 2) throw std::invalid_argument("factor " + f.name + " needs at least two levels");
    std::set<std::string> levels;
    for (const auto& l : f.levels) {
      if (!one_word(l.name)) throw std::invalid_argument("factor " + f.name + ": level '" + l.name + "' must be one word");
      if (!levels.insert(l.name).second) throw std::invalid_argument("factor " + f.name + ": level '" + l.name + "' is listed twice");
    }
    text_factors += f.changes_text;
  }
  if (text_factors > 1) throw std::invalid_argument("at most one factor may change the text");
  const int tf = text_factor();
  std::set<std::string> ids;
  for (const auto& item : items) {
    if (!one_word(item.id) || !ids.insert(item.id).second) throw std::invalid_argument("item id '" + item.id + "' is empty, not one word, or used twice");
    std::size_t open = 0, close = 0;
    const auto variants = variants_of(item, open, close);
    const std::size_t wanted = tf < 0 ? 1 : factors[static_cast<std::size_t>(tf)].levels.size();
    if (!variants.empty() && variants.size() != wanted) {
      throw std::invalid_argument("item " + item.id + ": " + std::to_string(variants.size()) + " target variants for " + std::to_string(wanted) +
                                  " levels of the text factor");
    }
  }
  for (const auto& p : passages) {
    if (!one_word(p.id) || !ids.insert(p.id).second) throw std::invalid_argument("passage id '" + p.id + "' is empty, not one word, or used twice");
    if (p.text.find('/') != std::string::npos) throw std::invalid_argument("passage " + p.id + ": '/' is the region mark, not text");
  }
  if (participants < 1) throw std::invalid_argument("at least one participant");
  if (!(question_share >= 0 && question_share <= 1)) throw std::invalid_argument("question_share must be within 0..1");
  if (!(accuracy_min >= 0 && accuracy_min <= accuracy_max && accuracy_max <= 1)) throw std::invalid_argument("accuracy bounds must lie within 0..1");
}

std::size_t cell_for(std::size_t list, std::size_t item, std::size_t cells) { return (item + list) % cells; }

std::size_t list_of(std::size_t participant, std::size_t lists) { return participant % lists; }

ResolvedItem resolve_item(const SentenceItem& item, std::size_t variant) {
  ResolvedItem out;
  std::size_t open = 0, close = 0;
  const auto variants = variants_of(item, open, close);
  if (variants.empty()) {
    out.marked_text = item.marked_text;
    return out;
  }
  if (variant >= variants.size()) throw std::invalid_argument("item " + item.id + ": no variant " + std::to_string(variant + 1));
  out.marked_text = item.marked_text.substr(0, open) + variants[variant] + item.marked_text.substr(close + 1);
  int region = 0;
  for (std::size_t i = 0; i < open; ++i) region += item.marked_text[i] == '/';
  out.target_region = region;
  return out;
}

std::string passage_marked_text(const PassageItem& passage) {
  std::string out;
  std::size_t i = 0;
  const std::string& t = passage.text;
  while (i < t.size()) {
    while (i < t.size() && std::isspace(static_cast<unsigned char>(t[i]))) ++i;
    std::size_t j = i;
    while (j < t.size() && !std::isspace(static_cast<unsigned char>(t[j]))) ++j;
    if (j > i) out += (out.empty() ? "" : " / ") + t.substr(i, j - i);
    i = j;
  }
  return out;
}

StudyDesign demo_design(std::size_t items, std::size_t passages) {
  const auto& all_items = bundled_sentence_items();
  const auto& all_passages = bundled_passages();
  if (items > all_items.size()) {
    throw std::invalid_argument(std::to_string(items) + " items asked for, " + std::to_string(all_items.size()) + " are bundled");
  }
  if (passages > all_passages.size()) {
    throw std::invalid_argument(std::to_string(passages) + " passages asked for, " + std::to_string(all_passages.size()) + " are bundled");
  }
  StudyDesign d;
  d.name = "harbour-news";
  d.task = "harbournews";
  // Effect sizes are our choice, near what the reading literature reports
  // (all from memory, not read from the papers):
  // - word frequency: rare words get first fixations and gaze durations some
  //   20-60 ms longer, are refixated more and skipped less, and slow the next
  //   word too (spillover) (Rayner 1998, Psychological Bulletin 124(3);
  //   Rayner & Duffy 1986; Inhoff & Rayner 1986);
  // - parafoveal preview in the boundary paradigm: an invalid preview costs
  //   some 20-50 ms on the target's first fixation (the preview benefit) and
  //   makes skipping of the target rarer (Rayner 1998; Schotter, Angele &
  //   Rayner 2012, Attention, Perception & Psychophysics 74(1)).
  // Their interaction is debated; here the effects simply add.
  Factor frequency;
  frequency.name = "frequency";
  frequency.changes_text = true;
  TargetEffect rare;
  rare.fixation_ms = 30;
  rare.spillover_ms = 20;
  rare.skip_factor = 0.75;
  rare.refixation = 0.10;
  frequency.levels = {{"frequent", {}}, {"rare", rare}};
  Factor preview;
  preview.name = "preview";
  TargetEffect invalid;
  invalid.first_fixation_ms = 30;
  invalid.skip_factor = 0.5;
  preview.levels = {{"valid", {}}, {"invalid", invalid}};
  d.factors = {frequency, preview};
  d.items.assign(all_items.begin(), all_items.begin() + static_cast<std::ptrdiff_t>(items));
  d.passages.assign(all_passages.begin(), all_passages.begin() + static_cast<std::ptrdiff_t>(passages));
  return d;
}

}  // namespace gazemill::sim
