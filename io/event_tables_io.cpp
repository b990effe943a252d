#include "io/event_tables_io.h"

#include <algorithm>
#include <cmath>
#include <set>

#include "io/number_text.h"

namespace gazemill {
namespace {

// Milliseconds to the microsecond, without trailing zeros.
std::string ms(double v) {
  std::string s = fixed_text(v, 3);
  while (s.back() == '0') s.pop_back();
  if (s.back() == '.') s.pop_back();
  return s;
}
std::string num(double v, int decimals) {
  if (!std::isfinite(v)) return "NA";
  return fixed_text(v, decimals);
}
template <typename T>
std::string opt(const std::optional<T>& v, int decimals = 2) {
  if (!v) return "NA";
  if constexpr (std::is_integral_v<T>) return std::to_string(*v);
  else return num(static_cast<double>(*v), decimals);
}
std::string text(const std::string& s) { return s.empty() ? "NA" : s; }

// One table line, its fields appended in place and tab-separated (these
// tables run to hundreds of thousands of lines; building each line from
// temporaries was most of their cost).
class Line {
 public:
  explicit Line(std::string& out) : out_(out) {}
  ~Line() { out_ += '\n'; }
  Line& operator<<(const std::string& field) {
    if (!first_) out_ += '\t';
    first_ = false;
    out_ += field;
    return *this;
  }
  // start_ms, end_ms (from the trial's start), start_us, end_us.
  Line& times(const EventTrial& t, Microseconds start, Microseconds end) {
    return *this << ms(static_cast<double>(start - t.start_us) / 1000.0) << ms(static_cast<double>(end - t.start_us) / 1000.0)
                 << std::to_string(start) << std::to_string(end);
  }

 private:
  std::string& out_;
  bool first_ = true;
};

// The table's memory once a few hundred lines show its line length: growing
// a string of tens of MB by doubling copies it again and again.
void reserve_from_first_lines(std::string& out, std::size_t lines_done, std::size_t lines, std::size_t header_bytes) {
  constexpr std::size_t kSample = 256;
  if (lines_done != kSample || lines <= kSample) return;
  const double per_line = static_cast<double>(out.size() - header_bytes) / kSample;
  out.reserve(header_bytes + static_cast<std::size_t>(per_line * 1.05 * static_cast<double>(lines)));
}

// Each event's trial columns: the same for all the events of a trial.
class TrialPart {
 public:
  explicit TrialPart(const EventTableColumns& tc) : tc_(tc) {}
  const std::string& of(const EventTrial* t) {
    if (t != last_) {
      text_ = tc_.row(*t);
      last_ = t;
    }
    return text_;
  }

 private:
  const EventTableColumns& tc_;
  const EventTrial* last_ = nullptr;
  std::string text_;
};

}  // namespace

EventTableColumns::EventTableColumns(const std::set<std::string>& variable_names, const DesignSpec& design) {
  variables_.push_back(design.item_variable);
  variables_.insert(variables_.end(), design.factors.begin(), design.factors.end());
  for (const auto& k : variable_names) {
    if (k != design.item_variable && std::find(design.factors.begin(), design.factors.end(), k) == design.factors.end()) variables_.push_back(k);
  }
  header_ = "participant\tsession\ttrial";
  for (std::size_t i = 0; i < variables_.size(); ++i) header_ += "\t" + (i == 0 ? std::string("item") : variables_[i]);
}

std::string EventTableColumns::row(const EventTrial& t) const {
  std::string out = t.participant + "\t" + text(t.session) + "\t" + t.trial;
  for (const auto& v : variables_) {
    const auto it = t.variables.find(v);
    out += "\t" + text(it == t.variables.end() ? std::string() : it->second);
  }
  return out;
}

std::string fixations_header(const EventTableColumns& tc) {
  return tc.header() + "\tfixation\tstart_ms\tend_ms\tstart_us\tend_us\tduration_ms\tdetected_duration_ms\teye\tx_px\ty_px\t"
                       "corrected_y_px\tpupil\tkept\tremoved_by\tmerged_into\tline\tregion\tregion_label\tregion_role\tline_chars\tlanding_chars\n";
}

std::string saccades_header(const EventTableColumns& tc) {
  return tc.header() + "\tsaccade\tstart_ms\tend_ms\tstart_us\tend_us\tduration_ms\teye\tstart_x_px\tstart_y_px\tend_x_px\t"
                       "end_y_px\tamplitude_deg\tpeak_velocity_deg_s\tdirection_deg\n";
}

std::string blinks_header(const EventTableColumns& tc) { return tc.header() + "\tblink\tstart_ms\tend_ms\tstart_us\tend_us\tduration_ms\teye\n"; }

void append_fixation_rows(const EventTables& t, const EventTableColumns& tc, std::string& out) {
  const std::size_t before = out.size();
  TrialPart trial(tc);
  for (std::size_t i = 0; i < t.fixations.size(); ++i) {
    reserve_from_first_lines(out, i, t.fixations.size(), before);
    const auto& f = t.fixations[i];
    const FixationEvent& e = f.event;
    Line line(out);
    line << trial.of(f.trial) << std::to_string(f.number);
    line.times(*f.trial, e.start_us, e.end_us) << ms(f.duration_ms) << ms(e.duration_ms()) << to_string(e.eye) << num(f.x_px, 2)
              << num(f.y_px, 2) << opt(f.corrected_y_px) << num(e.pupil, 3) << (f.kept ? "1" : "0") << text(f.removed_by) << opt(f.merged_into)
              << opt(f.line) << opt(f.region) << text(f.region_label) << text(f.region_role) << opt(f.line_chars) << opt(f.landing_chars);
  }
}

void append_saccade_rows(const EventTables& t, const EventTableColumns& tc, std::string& out) {
  const std::size_t before = out.size();
  TrialPart trial(tc);
  for (std::size_t i = 0; i < t.saccades.size(); ++i) {
    reserve_from_first_lines(out, i, t.saccades.size(), before);
    const auto& s = t.saccades[i];
    const SaccadeEvent& e = s.event;
    Line line(out);
    line << trial.of(s.trial) << std::to_string(s.number);
    line.times(*s.trial, e.start_us, e.end_us) << ms(static_cast<double>(e.end_us - e.start_us) / 1000.0) << to_string(e.eye)
              << num(e.start_x_px, 2) << num(e.start_y_px, 2) << num(e.end_x_px, 2) << num(e.end_y_px, 2) << num(e.amplitude_deg, 3)
              << num(e.peak_velocity_deg_s, 1) << num(e.direction_deg, 1);
  }
}

void append_blink_rows(const EventTables& t, const EventTableColumns& tc, std::string& out) {
  TrialPart trial(tc);
  for (const auto& b : t.blinks) {
    const BlinkEvent& e = b.event;
    Line line(out);
    line << trial.of(b.trial) << std::to_string(b.number);
    line.times(*b.trial, e.start_us, e.end_us) << ms(static_cast<double>(e.end_us - e.start_us) / 1000.0) << to_string(e.eye);
  }
}

}  // namespace gazemill
