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

// participant, session, trial, item, factors, other variables.
struct TrialColumns {
  std::vector<std::string> variables;
  std::string header;
  TrialColumns(const EventTables& t, const DesignSpec& design) {
    std::set<std::string> others;
    for (const auto& trial : t.trials) {
      for (const auto& [k, v] : trial->variables) {
        if (k != design.item_variable && std::find(design.factors.begin(), design.factors.end(), k) == design.factors.end()) others.insert(k);
      }
    }
    variables.push_back(design.item_variable);
    variables.insert(variables.end(), design.factors.begin(), design.factors.end());
    variables.insert(variables.end(), others.begin(), others.end());
    header = "participant\tsession\ttrial";
    for (std::size_t i = 0; i < variables.size(); ++i) header += "\t" + (i == 0 ? std::string("item") : variables[i]);
  }
  std::string row(const EventTrial& t) const {
    std::string out = t.participant + "\t" + text(t.session) + "\t" + t.trial;
    for (const auto& v : variables) {
      const auto it = t.variables.find(v);
      out += "\t" + text(it == t.variables.end() ? std::string() : it->second);
    }
    return out;
  }
};

std::string times(const EventTrial& t, Microseconds start, Microseconds end) {
  return ms(static_cast<double>(start - t.start_us) / 1000.0) + "\t" + ms(static_cast<double>(end - t.start_us) / 1000.0) + "\t" +
         std::to_string(start) + "\t" + std::to_string(end);
}

}  // namespace

std::string fixations_tsv(const EventTables& t, const DesignSpec& design) {
  const TrialColumns tc(t, design);
  std::string out = tc.header + "\tfixation\tstart_ms\tend_ms\tstart_us\tend_us\tduration_ms\tdetected_duration_ms\teye\tx_px\ty_px\t"
                    "corrected_y_px\tpupil\tkept\tremoved_by\tmerged_into\tline\tregion\tregion_label\tregion_role\tline_chars\tlanding_chars\n";
  for (const auto& f : t.fixations) {
    const FixationEvent& e = f.event;
    out += tc.row(*f.trial) + "\t" + std::to_string(f.number) + "\t" + times(*f.trial, e.start_us, e.end_us) + "\t" + ms(f.duration_ms) +
           "\t" + ms(e.duration_ms()) + "\t" + to_string(e.eye) + "\t" + num(f.x_px, 2) + "\t" + num(f.y_px, 2) + "\t" +
           opt(f.corrected_y_px) + "\t" + num(e.pupil, 3) + "\t" + (f.kept ? "1" : "0") + "\t" + text(f.removed_by) + "\t" +
           opt(f.merged_into) + "\t" + opt(f.line) + "\t" + opt(f.region) + "\t" + text(f.region_label) + "\t" + text(f.region_role) +
           "\t" + opt(f.line_chars) + "\t" + opt(f.landing_chars) + "\n";
  }
  return out;
}

std::string saccades_tsv(const EventTables& t, const DesignSpec& design) {
  const TrialColumns tc(t, design);
  std::string out = tc.header + "\tsaccade\tstart_ms\tend_ms\tstart_us\tend_us\tduration_ms\teye\tstart_x_px\tstart_y_px\tend_x_px\t"
                    "end_y_px\tamplitude_deg\tpeak_velocity_deg_s\tdirection_deg\n";
  for (const auto& s : t.saccades) {
    const SaccadeEvent& e = s.event;
    out += tc.row(*s.trial) + "\t" + std::to_string(s.number) + "\t" + times(*s.trial, e.start_us, e.end_us) + "\t" +
           ms(static_cast<double>(e.end_us - e.start_us) / 1000.0) + "\t" + to_string(e.eye) + "\t" + num(e.start_x_px, 2) + "\t" +
           num(e.start_y_px, 2) + "\t" + num(e.end_x_px, 2) + "\t" + num(e.end_y_px, 2) + "\t" + num(e.amplitude_deg, 3) + "\t" +
           num(e.peak_velocity_deg_s, 1) + "\t" + num(e.direction_deg, 1) + "\n";
  }
  return out;
}

std::string blinks_tsv(const EventTables& t, const DesignSpec& design) {
  const TrialColumns tc(t, design);
  std::string out = tc.header + "\tblink\tstart_ms\tend_ms\tstart_us\tend_us\tduration_ms\teye\n";
  for (const auto& b : t.blinks) {
    const BlinkEvent& e = b.event;
    out += tc.row(*b.trial) + "\t" + std::to_string(b.number) + "\t" + times(*b.trial, e.start_us, e.end_us) + "\t" +
           ms(static_cast<double>(e.end_us - e.start_us) / 1000.0) + "\t" + to_string(e.eye) + "\n";
  }
  return out;
}

}  // namespace gazemill
