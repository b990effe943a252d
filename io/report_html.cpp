#include "io/report_html.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>
#include <libdeflate.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cctype>
#include <cstring>
#include <exception>
#include <map>
#include <memory>
#include <stdexcept>
#include <thread>
#include <utility>
#include <vector>

#include "io/atomic_file.h"

namespace gazemill {

const std::vector<std::pair<std::string, std::string>>& embedded_assets();  // generated from io/report_assets/ and libjs-vega

namespace {

using json = nlohmann::json;
using Attrs = std::vector<std::pair<std::string, std::string>>;

// --- an HTML writer that escapes every text and attribute --------------------------

// Text needs &, < and > escaped; an attribute value also its quotes.
std::string escape_html(std::string_view s, bool quotes) {
  std::string out;
  out.reserve(s.size());
  for (char c : s) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += quotes ? "&quot;" : "\""; break;
      case '\'': out += quotes ? "&#39;" : "'"; break;
      default: out += c;
    }
  }
  return out;
}

std::string escape_text(std::string_view s) { return escape_html(s, false); }
std::string escape_attribute(std::string_view s) { return escape_html(s, true); }

// Script text can end its element only by "</script" and can open an
// escaped state by "<!--" (HTML, "Restrictions for contents of script
// elements"); both are written so that JavaScript reads them the same
// ("<\/" in a string or pattern is "</", "<\!" is "<!"). Nothing else is
// touched: "</" alone may be a pattern such as /</g.
std::string script_safe(std::string_view code) {
  std::string out;
  out.reserve(code.size());
  auto lower_at = [&](std::size_t i, std::string_view word) {
    if (i + word.size() > code.size()) return false;
    for (std::size_t k = 0; k < word.size(); ++k) {
      if (std::tolower(static_cast<unsigned char>(code[i + k])) != word[k]) return false;
    }
    return true;
  };
  for (std::size_t i = 0; i < code.size(); ++i) {
    if (code[i] == '<' && (lower_at(i, "</script") || lower_at(i, "<!--"))) {
      out += "<\\";
      continue;
    }
    out += code[i];
  }
  return out;
}

class HtmlWriter {
 public:
  void open(std::string_view tag, const Attrs& attrs = {}) {
    start_tag(tag, attrs);
    stack_.emplace_back(tag);
  }
  void close() {
    if (stack_.empty()) throw std::logic_error("HtmlWriter: close without open");
    out_ += "</" + stack_.back() + ">";
    stack_.pop_back();
  }
  void empty(std::string_view tag, const Attrs& attrs = {}) { start_tag(tag, attrs); }
  void text(std::string_view s) { out_ += escape_text(s); }
  void element(std::string_view tag, const Attrs& attrs, std::string_view s) {
    open(tag, attrs);
    text(s);
    close();
  }
  void element(std::string_view tag, std::string_view s) { element(tag, {}, s); }
  void script(std::string_view code, const Attrs& attrs = {}) {
    start_tag("script", attrs);
    out_ += script_safe(code);
    out_ += "</script>\n";
  }
  void style(std::string_view css) {
    if (css.find("</") != std::string_view::npos) throw std::logic_error("HtmlWriter: a style sheet may not contain </");
    out_ += "<style>";
    out_ += css;
    out_ += "</style>\n";
  }
  void comment(std::string_view s) {
    std::string safe(s);
    for (std::size_t p; (p = safe.find("--")) != std::string::npos;) safe.replace(p, 2, "- -");
    out_ += "<!--" + safe + "-->\n";
  }
  void newline() { out_ += '\n'; }
  std::string finish() {
    if (!stack_.empty()) throw std::logic_error("HtmlWriter: <" + stack_.back() + "> left open");
    return std::move(out_);
  }

 private:
  void start_tag(std::string_view tag, const Attrs& attrs) {
    out_ += "<";
    out_ += tag;
    for (const auto& [k, v] : attrs) out_ += " " + k + "=\"" + escape_attribute(v) + "\"";
    out_ += ">";
  }
  std::string out_;
  std::vector<std::string> stack_;
};

// --- numbers ---------------------------------------------------------------------------

// A number rounded to `digits` decimals (null for NaN or infinity), so that the JSON carries no noise digits.
json num(double v, int digits = 3) {
  if (!std::isfinite(v)) return nullptr;
  const double f = std::pow(10.0, digits);
  const double r = std::round(v * f) / f;
  if (digits == 0 || r == std::trunc(r)) return static_cast<std::int64_t>(r);
  return r;
}

std::string fmt_num(double v, int digits) { return std::isfinite(v) ? fmt::format("{:.{}f}", v, digits) : std::string("–"); }
std::string fmt_pct(double share, int digits = 1) { return std::isfinite(share) ? fmt::format("{:.{}f} %", 100 * share, digits) : std::string("–"); }
double ratio(std::uint64_t a, std::uint64_t b) { return b ? static_cast<double>(a) / static_cast<double>(b) : std::nan(""); }
std::string thousands(std::uint64_t v) {
  std::string s = std::to_string(v), out;
  for (std::size_t i = 0; i < s.size(); ++i) {
    if (i && (s.size() - i) % 3 == 0) out += "\u2009";  // thin space
    out += s[i];
  }
  return out;
}

json histogram_json(const Histogram& h, int digits = 3) {
  return {{"first", num(h.first_edge, digits)}, {"width", num(h.bin_width, digits + 2)}, {"counts", h.counts}};
}

json summary_json(const ValueSummary& s, int digits) {
  return {{"n", s.n}, {"mean", num(s.mean, digits)}, {"min", num(s.min, digits)}, {"max", num(s.max, digits)}, {"p05", num(s.p05, digits)},
          {"q1", num(s.q1, digits)}, {"median", num(s.median, digits)}, {"q3", num(s.q3, digits)}, {"p95", num(s.p95, digits)}};
}

// --- the page's data -------------------------------------------------------------------

json run_json(const ReportRun& r) {
  json j;
  j["study"] = r.study_name;
  j["factors"] = r.factors;
  j["cells"] = r.cells;
  return j;
}

json quality_json(const std::vector<ParticipantQuality>& q) {
  json j = json::array();
  for (const auto& p : q) {
    j.push_back({{"participant", p.participant},
                 {"missing", num(ratio(p.missing_samples, p.samples), 5)},
                 {"trial_missing", num(ratio(p.trial_missing_samples, p.trial_samples), 5)},
                 {"rms", num(p.rms_s2s_deg, 4)},
                 {"rms_q1", num(p.rms_s2s_q1_deg, 4)},
                 {"rms_q3", num(p.rms_s2s_q3_deg, 4)},
                 {"std", num(p.std_deg, 4)},
                 {"fixations", p.precision_fixations},
                 {"nominal_hz", num(p.nominal_rate_hz, 2)},
                 {"measured_hz", num(p.measured_rate_hz, 2)},
                 {"irregular", num(ratio(p.irregular_intervals, p.intervals), 6)},
                 {"gaps", p.gaps},
                 {"repairs", p.repairs}});
  }
  return j;
}

json cleaning_json(const CleaningSummary& c) {
  json j;
  j["present"] = c.present;
  if (!c.present) return j;
  json rules = json::array();
  for (const auto& r : c.rules) rules.push_back({{"name", r.name}, {"kind", r.kind}, {"level", r.level}});
  j["rules"] = rules;
  json flow = json::array();
  for (const auto& f : c.flow) {
    flow.push_back({{"level", f.level}, {"cell", f.cell}, {"rule", f.rule}, {"input", f.input}, {"seq", f.removed_sequential},
                    {"alone", f.removed_alone}, {"merged", f.merged_sequential}, {"remaining", f.remaining}});
  }
  j["flow"] = flow;
  json who = json::array();
  for (const auto& p : c.participants) {
    who.push_back({{"participant", p.participant}, {"level", p.level}, {"rule", p.rule}, {"removed", p.removed_sequential}, {"input", p.input}});
  }
  j["participants"] = who;
  return j;
}

json detection_json(const DetectionSummary& d) {
  json j;
  j["present"] = d.present;
  if (!d.present) return j;
  j["method"] = d.method;
  j["fixation_ms"] = histogram_json(d.fixation_duration_ms);
  j["kept_fixation_ms"] = histogram_json(d.kept_fixation_duration_ms);
  j["amplitude_deg"] = histogram_json(d.saccade_amplitude_deg, 4);
  const Histogram2D& m = d.main_sequence;
  j["main_sequence"] = {{"x_first", num(m.x_first_edge, 4)}, {"x_width", num(m.x_bin_width, 5)}, {"x_bins", m.x_bins},
                        {"y_first", num(m.y_first_edge, 3)}, {"y_width", num(m.y_bin_width, 4)}, {"y_bins", m.y_bins},
                        {"counts", m.counts}};
  json ref = {{"v_max_low", d.reference.v_max_low_deg_s}, {"v_max_high", d.reference.v_max_high_deg_s}, {"c", d.reference.c_deg}};
  json a = json::array(), lo = json::array(), hi = json::array();
  for (std::size_t i = 0; i < d.reference.amplitude_deg.size(); ++i) {
    a.push_back(num(d.reference.amplitude_deg[i], 4));
    lo.push_back(num(d.reference.low_deg_s[i], 2));
    hi.push_back(num(d.reference.high_deg_s[i], 2));
  }
  ref["amplitude"] = a;
  ref["low"] = lo;
  ref["high"] = hi;
  j["reference"] = ref;
  j["outlier_z"] = d.outlier_z;
  json ps = json::array();
  for (const auto& p : d.participants) {
    ps.push_back({{"participant", p.participant},
                  {"fixations_per_trial", num(p.fixations_per_trial, 2)},
                  {"median_fixation_ms", num(p.median_fixation_ms, 1)},
                  {"median_amplitude_deg", num(p.median_amplitude_deg, 3)},
                  {"velocity_ratio", num(p.median_velocity_ratio, 3)},
                  {"leftward_share", num(p.regression_share, 4)},
                  {"z", {num(p.z_fixations_per_trial, 2), num(p.z_median_fixation, 2), num(p.z_median_amplitude, 2), num(p.z_velocity_ratio, 2),
                         num(p.z_regression_share, 2)}},
                  {"outlying", p.outlying}});
  }
  j["participants"] = ps;
  return j;
}

json drift_json(const DriftSummary& d) {
  json j;
  j["present"] = d.present;
  if (!d.present) return j;
  j["methods"] = d.methods;
  j["confidence"] = histogram_json(d.confidence, 3);
  j["flagged_confidence"] = histogram_json(d.flagged_confidence, 3);
  json ps = json::array();
  for (const auto& p : d.participants) {
    ps.push_back({{"participant", p.participant}, {"trials", p.trials}, {"flagged", p.flagged}, {"confidence", summary_json(p.confidence, 3)}});
  }
  j["participants"] = ps;
  json flagged = json::array();
  for (const auto& t : d.flagged_trials) {
    flagged.push_back({{"recording", t.recording}, {"participant", t.participant}, {"trial", t.trial}, {"item", t.item}, {"cell", t.cell},
                       {"method", t.method}, {"confidence", num(t.confidence, 3)}});
  }
  j["flagged_trials"] = flagged;
  return j;
}

json measures_json(const MeasuresSummary& m) {
  json j;
  j["present"] = m.present;
  if (!m.present) return j;
  j["measures"] = m.measures;
  j["roles"] = m.roles;
  json dist = json::array();
  for (const auto& d : m.distributions) {
    json s = summary_json(d.summary, 1);
    s["measure"] = d.measure;
    s["role"] = d.role;
    s["cell"] = d.cell;
    dist.push_back(s);
  }
  j["distributions"] = dist;
  json means = json::array();
  for (const auto& p : m.participant_means) {
    means.push_back({{"participant", p.participant}, {"measure", p.measure}, {"role", p.role}, {"cell", p.cell}, {"mean", num(p.mean_ms, 1)}, {"n", p.n}});
  }
  j["participant_means"] = means;
  json probs = json::array();
  for (const auto& p : m.probabilities) {
    probs.push_back({{"role", p.role}, {"cell", p.cell}, {"measure", p.measure}, {"p", num(p.probability, 4)}, {"n", p.denominator}});
  }
  j["probabilities"] = probs;
  json pp = json::array();
  for (const auto& p : m.participant_probabilities) {
    pp.push_back({{"participant", p.participant}, {"role", p.role}, {"cell", p.cell}, {"measure", p.measure}, {"p", num(p.probability, 4)}, {"n", p.denominator}});
  }
  j["participant_probabilities"] = pp;
  return j;
}

const char kBase64[] = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";

std::string base64(const std::vector<unsigned char>& bytes) {
  std::string out;
  out.reserve((bytes.size() + 2) / 3 * 4);
  for (std::size_t i = 0; i < bytes.size(); i += 3) {
    const std::uint32_t b0 = bytes[i], b1 = i + 1 < bytes.size() ? bytes[i + 1] : 0, b2 = i + 2 < bytes.size() ? bytes[i + 2] : 0;
    const std::uint32_t triple = (b0 << 16) | (b1 << 8) | b2;
    out += kBase64[(triple >> 18) & 63];
    out += kBase64[(triple >> 12) & 63];
    out += i + 1 < bytes.size() ? kBase64[(triple >> 6) & 63] : '=';
    out += i + 2 < bytes.size() ? kBase64[triple & 63] : '=';
  }
  return out;
}

// The time course, x and y interleaved, each as whole pixels in a byte code
// that keeps a trial near a kilobyte: per value an unsigned LEB128 varint of
// 0 for an empty bin, else 1 + the zigzag code of the step from that axis's
// last value (0 before the first). Gaze rests between saccades, so most
// steps take one byte.
void append_time_course(std::vector<unsigned char>& bytes, const std::vector<float>& x, const std::vector<float>& y) {
  std::int64_t last[2] = {0, 0};
  auto put = [&](float v, int axis) {
    std::uint64_t code = 0;
    if (std::isfinite(v)) {
      const std::int64_t px = std::clamp<std::int64_t>(std::llround(v), -1000000, 1000000);
      const std::int64_t step = px - last[axis];
      last[axis] = px;
      code = 1 + (step >= 0 ? static_cast<std::uint64_t>(step) * 2 : static_cast<std::uint64_t>(-step) * 2 - 1);
    }
    do {
      unsigned char b = code & 0x7f;
      code >>= 7;
      if (code) b |= 0x80;
      bytes.push_back(b);
    } while (code);
  };
  for (std::size_t i = 0; i < x.size(); ++i) {
    put(x[i], 0);
    put(i < y.size() ? y[i] : std::nanf(""), 1);
  }
}

// The viewer's data (every trial's fixations and time course, the layouts)
// is most of a large study's page, and a reader looks at a few trials of it.
// It travels packed, one block per recording and one for the layouts, each
// unpacked only when first shown: a little-endian uint32 length, a JSON
// text, then bytes (the recording's time courses; each trial names its
// offset and length in them), the whole compressed in the zlib format
// (RFC 1950, which the browser's DecompressionStream("deflate") reads) and
// base64-encoded (RFC 4648).
std::string pack(const json& j, const std::vector<unsigned char>& bytes) {
  const std::string text = j.dump(-1, ' ', false, json::error_handler_t::replace);
  std::vector<unsigned char> plain;
  plain.reserve(4 + text.size() + bytes.size());
  const auto n = static_cast<std::uint32_t>(text.size());
  for (int k = 0; k < 4; ++k) plain.push_back(static_cast<unsigned char>((n >> (8 * k)) & 0xff));
  plain.insert(plain.end(), text.begin(), text.end());
  plain.insert(plain.end(), bytes.begin(), bytes.end());
  // The zlib format the page inflates, written by libdeflate (several times
  // quicker than zlib at the same level; a fifth of a report's time before).
  std::unique_ptr<libdeflate_compressor, void (*)(libdeflate_compressor*)> compressor(libdeflate_alloc_compressor(6), libdeflate_free_compressor);
  if (!compressor) throw std::runtime_error("report: no deflate compressor");
  std::vector<unsigned char> packed(libdeflate_zlib_compress_bound(compressor.get(), plain.size()));
  const std::size_t size = libdeflate_zlib_compress(compressor.get(), plain.data(), plain.size(), packed.data(), packed.size());
  if (size == 0) throw std::runtime_error("report: the viewer's data could not be compressed");
  packed.resize(size);
  return base64(packed);
}

// What the page needs before any trial is shown: the screen, the font, the rule names, and who is in it.
json viewer_meta(const ReportViewer& v) {
  json j;
  j["present"] = v.present;
  if (!v.present) return j;
  j["screen"] = {v.screen_width_px, v.screen_height_px};
  j["char_width"] = num(v.text.char_width_px, 3);
  json adv = json::object();
  for (const auto& [c, a] : v.text.advance_px) adv[std::string(1, c)] = num(a, 3);
  j["advances"] = adv;
  j["rules"] = v.rules;
  json recs = json::array();
  for (std::size_t i = 0; i < v.recordings.size(); ++i) {
    const auto& r = v.recordings[i];
    recs.push_back({{"id", r.id}, {"participant", r.participant}, {"session", r.session}, {"trial_count", r.packed ? r.packed->trials : r.trials.size()},
                    {"packed", "gazemill-viewer-r" + std::to_string(i)}});
  }
  j["recordings"] = recs;
  j["layouts_packed"] = "gazemill-viewer-layouts";
  return j;
}

json layouts_json(const ReportViewer& v) {
  json layouts = json::array();
  for (const auto& l : v.layouts) {
    json lines = json::array();
    for (const auto& line : l.lines) lines.push_back({num(line.top_px, 1), num(line.bottom_px, 1)});
    json regions = json::array();
    for (const auto& r : l.regions) {
      json boxes = json::array();
      for (const auto& b : r.boxes) boxes.push_back({num(b.left_px, 1), num(b.top_px, 1), num(b.right_px, 1), num(b.bottom_px, 1)});
      regions.push_back({{"label", r.label}, {"role", r.role}, {"boxes", boxes}});
    }
    json words = json::array();
    for (const auto& w : l.words) words.push_back({w.text, w.line, num(w.left_px, 1)});
    layouts.push_back({{"item", l.item}, {"cell", l.cell}, {"lines", lines}, {"regions", regions}, {"words", words}});
  }
  return {{"layouts", layouts}};
}

// One recording's trials, with their time courses in `samples`.
json recording_json(const ViewerRecording& r, std::vector<unsigned char>& samples) {
  json trials = json::array();
  for (const auto& t : r.trials) {
    // Fixations as arrays: [start ms, duration ms, x px, y px, line] when kept,
    // [start, duration, x, y, line, rule, merged] when removed.
    json fix = json::array();
    for (const auto& f : t.fixations) {
      json a = {num(f.start_ms, 0), num(f.duration_ms, 0), num(f.x_px, 0), num(f.y_px, 0), f.line};
      if (f.removed_by >= 0 || f.merged) {
        a.push_back(f.removed_by);
        a.push_back(f.merged ? 1 : 0);
      }
      fix.push_back(std::move(a));
    }
    json tj = {{"id", t.trial}, {"item", t.item}, {"cell", t.cell}, {"layout", t.layout}, {"duration", num(t.duration_ms, 0)}, {"kept", t.kept ? 1 : 0}, {"f", fix}};
    if (!t.kept) tj["why"] = t.removed_by_rule + (t.removed_reason.empty() ? "" : ": " + t.removed_reason);
    if (!t.align_method.empty()) tj["align"] = {t.align_method, num(t.align_confidence, 3), t.align_flagged ? 1 : 0};
    if (!t.x_px.empty()) {
      tj["bin"] = num(t.bin_ms, 3);
      const std::size_t offset = samples.size();
      append_time_course(samples, t.x_px, t.y_px);
      tj["s"] = {offset, samples.size() - offset};
    }
    trials.push_back(std::move(tj));
  }
  return {{"trials", trials}};
}

// JSON that may sit inside a <script> element: '<', '>' and '&' only occur in
// strings, where \u escapes mean the same characters.
std::string json_for_script(const json& j) {
  const std::string s = j.dump(-1, ' ', false, json::error_handler_t::replace);
  std::string out;
  out.reserve(s.size() + s.size() / 50);
  for (char c : s) {
    switch (c) {
      case '<': out += "\\u003c"; break;
      case '>': out += "\\u003e"; break;
      case '&': out += "\\u0026"; break;
      default: out += c;
    }
  }
  return out;
}

// --- alternative texts: what each chart shows, in words ------------------------------------

template <typename T, typename F>
const T* max_by(const std::vector<T>& v, F f) {
  const T* best = nullptr;
  for (const auto& x : v) {
    if (std::isfinite(f(x)) && (!best || f(x) > f(*best))) best = &x;
  }
  return best;
}

double median_value(std::vector<double> v) {
  std::erase_if(v, [](double x) { return !std::isfinite(x); });
  if (v.empty()) return std::nan("");
  std::sort(v.begin(), v.end());
  const std::size_t n = v.size();
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

struct Figure {
  std::string id, chart, title, note, alt;
};

void figure(HtmlWriter& w, const Figure& f, const std::string& extra_class = "") {
  w.open("figure", {{"class", "chart" + (extra_class.empty() ? "" : " " + extra_class)}, {"id", f.id}});
  w.open("figcaption");
  w.element("span", {{"class", "chart-title"}}, f.title);
  if (!f.note.empty()) {
    w.text(" ");
    w.element("span", {{"class", "chart-note"}}, f.note);
  }
  w.close();
  w.open("div", {{"class", "vega"}, {"data-chart", f.chart}, {"role", "img"}, {"aria-label", f.alt}});
  w.close();
  w.close();
  w.newline();
}

void table(HtmlWriter& w, const std::vector<std::string>& head, const std::vector<std::vector<std::string>>& rows, const std::string& caption,
           const std::vector<bool>& numeric = {}, const std::string& cls = "", const std::vector<std::string>& row_classes = {}) {
  w.open("div", {{"class", "table-wrap"}});
  w.open("table", cls.empty() ? Attrs{} : Attrs{{"class", cls}});
  w.element("caption", caption);
  w.open("thead");
  w.open("tr");
  for (std::size_t i = 0; i < head.size(); ++i) {
    w.element("th", {{"scope", "col"}, {"class", i < numeric.size() && numeric[i] ? "num" : ""}}, head[i]);
  }
  w.close();
  w.close();
  w.open("tbody");
  for (std::size_t k = 0; k < rows.size(); ++k) {
    const auto& r = rows[k];
    w.open("tr", k < row_classes.size() && !row_classes[k].empty() ? Attrs{{"class", row_classes[k]}} : Attrs{});
    for (std::size_t i = 0; i < r.size(); ++i) {
      if (i == 0) {
        w.element("th", {{"scope", "row"}}, r[i]);
      } else {
        w.element("td", i < numeric.size() && numeric[i] ? Attrs{{"class", "num"}} : Attrs{}, r[i]);
      }
    }
    w.close();
  }
  w.close();
  w.close();
  w.close();
  w.newline();
}

void section_start(HtmlWriter& w, const std::string& id, const std::string& number, const std::string& title, const std::string& lead) {
  w.open("section", {{"id", id}, {"aria-labelledby", id + "-h"}});
  w.open("h2", {{"id", id + "-h"}});
  w.element("span", {{"class", "sec-no"}}, number);
  w.text(" " + title);
  w.close();
  if (!lead.empty()) w.element("p", {{"class", "lead"}}, lead);
}

void absent(HtmlWriter& w, const std::string& what) { w.element("p", {{"class", "absent"}}, what); }

// Why a stage's results are not in the store: it never ran, or it went stale (and its results were removed).
std::string missing_stage(const ReportModel& m, const std::string& stage, const std::string& what) {
  for (const auto& s : m.run.stages) {
    if (s.stage != stage) continue;
    if (s.state == "stale") {
      return what + " is out of date (" + (s.note.empty() ? std::string("made from results that have changed since") : s.note) +
             "), so the store holds none: run gazemill run (or gazemill " + stage + ").";
    }
    if (s.state == "current") return what + " could not be read from the store (see the notes above).";
  }
  return what + " has not run on this store: run gazemill run (or gazemill " + stage + ").";
}

// --- the sections ----------------------------------------------------------------------

void run_section(HtmlWriter& w, const ReportModel& m) {
  const ReportRun& r = m.run;
  section_start(w, "run", "1", "The run and where it came from",
                "What was read, by which gazemill and protocol, and whether every stage's results are current.");
  w.open("dl", {{"class", "figures"}});
  auto fig = [&](const std::string& k, const std::string& v) {
    w.open("div");
    w.element("dt", k);
    w.element("dd", v);
    w.close();
  };
  fig("participants", m.cleaning.present ? thousands(r.participants_kept) + " of " + thousands(r.participants) + " kept" : thousands(r.participants));
  fig("recordings", thousands(r.recordings));
  fig("trials", m.cleaning.present ? thousands(r.trials_kept) + " of " + thousands(r.trials) + " kept" : thousands(r.trials));
  fig("samples", thousands(r.samples));
  fig("fixations", m.cleaning.present ? thousands(r.fixations_kept) + " of " + thousands(r.fixations_detected) + " kept"
                                      : thousands(r.fixations_detected) + " detected");
  fig("design cells", r.cells.empty() ? std::string("–") : std::to_string(r.cells.size()));
  w.close();
  if (!r.notes.empty()) {
    w.open("ul", {{"class", "notes"}});
    for (const auto& n : r.notes) w.element("li", n);
    w.close();
  }
  // What the stages warned of when they made these results: as true now as then.
  std::vector<std::string> warned;
  for (const auto& s : r.stages) {
    for (const auto& x : s.warnings) warned.push_back(s.stage + ": " + x);
  }
  if (!warned.empty()) {
    w.element("p", "The stages warned, when they made these results:");
    w.open("ul", {{"class", "notes stage-warnings"}});
    for (const auto& x : warned) w.element("li", x);
    w.close();
  }
  figure(w, {"fig-run-trials", "run-trials", "Trials per participant", "kept and excluded by cleaning",
             "Bar chart of each participant's trials, split into those cleaning kept and those it excluded. " +
                 (m.cleaning.present ? thousands(r.trials_kept) + " of " + thousands(r.trials) + " trials were kept."
                                     : std::string("Cleaning has not run, so every trial is shown as kept."))});
  std::vector<std::vector<std::string>> stages;
  std::vector<std::string> state_classes;
  for (const auto& s : r.stages) {
    stages.push_back({s.stage, s.state, s.created_utc.empty() ? "–" : s.created_utc, s.tool_version.empty() ? "–" : s.tool_version,
                      s.protocol_sha256.empty() ? "–" : s.protocol_sha256.substr(0, 12) + "…", s.note});
    state_classes.push_back("state-" + s.state);
  }
  table(w, {"stage", "state", "ran (UTC)", "gazemill", "protocol SHA-256", "note"}, stages,
        "Stages, in pipeline order, with the protocol each ran with", {}, "stages", state_classes);
  w.open("dl", {{"class", "provenance"}});
  auto row = [&](const std::string& k, const std::string& v, bool code = false) {
    w.element("dt", k);
    w.open("dd");
    if (code) w.element("code", v);
    else w.text(v);
    w.close();
  };
  row("study", r.study_name.empty() ? "–" : r.study_name);
  row("store", r.store_path, true);
  row("report written", r.report_created_utc + " by gazemill " + r.report_tool_version);
  row("store made", r.store_created_utc + " by gazemill " + r.store_tool_version);
  row("protocol", r.protocol_path, true);
  row("protocol SHA-256 at ingest", r.protocol_sha256, true);
  row("design", r.factors.empty() ? std::string("no factors") : [&] {
    std::string s;
    for (const auto& f : r.factors) s += (s.empty() ? "" : " × ") + f;
    return s;
  }());
  w.close();
  std::vector<std::vector<std::string>> inputs;
  for (const auto& in : r.inputs) inputs.push_back({in.path, in.recording_id, thousands(in.size_bytes), in.sha256});
  w.open("details", r.inputs.size() <= 12 ? Attrs{{"open", ""}} : Attrs{});
  w.element("summary", fmt::format("{} input files with their SHA-256", r.inputs.size()));
  table(w, {"file", "recording", "bytes", "SHA-256"}, inputs, "Input files as read at ingest", {false, false, true, false}, "inputs");
  w.close();
  if (!r.repairs.empty()) {
    std::vector<std::vector<std::string>> reps;
    for (const auto& rp : r.repairs) reps.push_back({rp.recording_id, rp.kind, thousands(rp.count)});
    table(w, {"recording", "repair", "count"}, reps, "Repairs made at ingest", {false, false, true});
  }
  w.close();
}

void quality_section(HtmlWriter& w, const ReportModel& m) {
  section_start(w, "quality", "2", "Signal quality",
                "How much gaze was lost, how steady it was while the eyes were still, and how evenly it was sampled, per participant.");
  const auto& q = m.quality;
  if (q.empty()) {
    absent(w, "No recordings in the store.");
    w.close();
    return;
  }
  std::vector<double> missing, rms;
  for (const auto& p : q) {
    missing.push_back(ratio(p.trial_missing_samples, p.trial_samples));
    rms.push_back(p.rms_s2s_deg);
  }
  const auto* worst = max_by(q, [](const ParticipantQuality& p) { return ratio(p.trial_missing_samples, p.trial_samples); });
  figure(w, {"fig-quality-missing", "quality-missing", "Samples without gaze", "inside trials (bars) and over whole recordings (ticks)",
             "Bar chart of the share of samples with no valid gaze per participant. Median inside trials " + fmt_pct(median_value(missing)) +
                 (worst ? "; highest " + worst->participant + " at " + fmt_pct(ratio(worst->trial_missing_samples, worst->trial_samples)) : "") + "."});
  const auto* noisiest = max_by(q, [](const ParticipantQuality& p) { return p.rms_s2s_deg; });
  figure(w, {"fig-quality-precision", "quality-precision", "Precision within fixations",
             "RMS sample-to-sample distance (dots, median over fixations, with its quartiles) and STD (rings), in degrees",
             "Dot chart of each participant's precision in degrees: the median RMS-S2S over their fixations with the interquartile range, "
             "and the STD. Median across participants " + fmt_num(median_value(rms), 3) + " deg" +
                 (noisiest ? "; noisiest " + noisiest->participant + " at " + fmt_num(noisiest->rms_s2s_deg, 3) + " deg" : "") + "."});
  w.open("p", {{"class", "method"}});
  w.text("Precision after Holmqvist, Nyström & Mulvey (2012): RMS-S2S is the root mean square of the angular distances between successive "
         "valid samples, STD the spread of the samples around their mean, both inside each detected fixation (in the eye detection used), "
         "in degrees of visual angle from the screen's geometry. Their ratio tells the kind of noise (about 1.41 for white noise; Niehorster et al. 2020). "
         "An interval is irregular when it differs from the recording's median interval by more than 10 %, a gap when it is more than twice the median.");
  w.close();
  std::vector<std::vector<std::string>> rows;
  for (const auto& p : q) {
    std::string repairs = thousands(p.repairs);
    if (!p.repair_kinds.empty()) {
      std::string kinds;
      for (const auto& [k, n] : p.repair_kinds) kinds += (kinds.empty() ? "" : ", ") + k + " " + thousands(n);
      repairs += " (" + kinds + ")";
    }
    rows.push_back({p.participant, std::to_string(p.trials), thousands(p.samples), fmt_pct(ratio(p.missing_samples, p.samples)),
                    fmt_pct(ratio(p.trial_missing_samples, p.trial_samples)),
                    fmt_num(p.measured_rate_hz, 1) + (std::abs(p.measured_rate_hz - p.nominal_rate_hz) > 0.05 ? " (of " + fmt_num(p.nominal_rate_hz, 1) + ")" : ""),
                    fmt_num(p.interval_sd_us, 1), fmt_pct(ratio(p.irregular_intervals, p.intervals), 2), thousands(p.gaps),
                    p.longest_gap_us ? fmt_num(static_cast<double>(p.longest_gap_us) / 1000.0, 1) : std::string("–"),
                    fmt_num(p.rms_s2s_deg, 3),
                    fmt_num(p.std_deg, 3), thousands(p.precision_fixations), repairs});
  }
  table(w,
        {"participant", "trials", "samples", "missing", "in trials", "rate Hz", "interval SD µs", "irregular", "gaps", "longest gap ms",
         "RMS-S2S deg", "STD deg", "fixations", "repairs at ingest"},
        rows, "Data quality per participant (sampling inside trials)",
        {false, true, true, true, true, true, true, true, true, true, true, true, true, false});
  w.close();
}

void cleaning_section(HtmlWriter& w, const ReportModel& m) {
  const CleaningSummary& c = m.cleaning;
  section_start(w, "cleaning", "3", "What cleaning removed",
                "The protocol's rules in their order: how many samples, fixations, trials and participants each removed, first (sequential) "
                "and when applied alone, per design cell, and from whom.");
  if (!c.present) {
    absent(w, missing_stage(m, "clean", "Cleaning"));
    w.close();
    return;
  }
  if (c.rules.empty()) {
    absent(w, "The protocol has no [[cleaning]] rules: every sample, fixation, trial and participant was kept.");
  }
  auto kept_text = [&](const std::string& level) {
    const auto in = c.input.find(level), kept = c.kept.find(level);
    if (in == c.input.end() || kept == c.kept.end()) return std::string("–");
    return thousands(kept->second) + " of " + thousands(in->second) + " (" + fmt_pct(ratio(kept->second, in->second)) + ")";
  };
  figure(w, {"fig-cleaning-flow", "cleaning-flow", "What is left after each rule", "share of the input, rule by rule, per design cell",
             "Step charts, one per level, of the share of samples, fixations, trials and participants left after each cleaning rule in protocol order. "
             "Kept in the end: fixations " + kept_text("fixation") + ", trials " + kept_text("trial") + ", participants " + kept_text("participant") + "."});
  figure(w, {"fig-cleaning-rules", "cleaning-rules", "What each rule removed", "bars: first removed by the rule (sequential); ticks: removed by the rule alone; dots: per design cell",
             "Bar chart of the share of the input each cleaning rule removed at the chosen level, sequentially and alone, with one dot per design cell."});
  figure(w, {"fig-cleaning-who", "cleaning-who", "From whom", "share of each participant's items removed by each rule (sequential)",
             "Heat map of participants by cleaning rules: the share of each participant's fixations or trials that each rule removed."});
  std::vector<std::vector<std::string>> rows;
  std::map<std::pair<std::string, std::size_t>, const CleaningFlowRow*> all;
  for (const auto& f : c.flow) {
    if (f.cell.empty()) all[{f.level, f.rule}] = &f;
  }
  for (std::size_t i = 0; i < c.rules.size(); ++i) {
    std::vector<std::string> r = {std::to_string(i + 1) + ". " + c.rules[i].name, c.rules[i].kind, c.rules[i].level};
    for (const char* level : {"sample", "fixation", "trial", "participant"}) {
      const auto it = all.find({level, i});
      if (it == all.end()) {
        r.push_back("–");
        continue;
      }
      const CleaningFlowRow& f = *it->second;
      std::string cell = thousands(f.removed_sequential);
      if (f.removed_alone != f.removed_sequential) cell += " (alone " + thousands(f.removed_alone) + ")";
      if (f.merged_sequential) cell += ", " + thousands(f.merged_sequential) + " merged";
      r.push_back(cell);
    }
    rows.push_back(r);
  }
  table(w, {"rule", "kind", "level", "samples", "fixations", "trials", "participants"}, rows,
        "Removed by each rule, first in protocol order (and alone where that differs)", {false, false, false, true, true, true, true});
  w.close();
}

void detection_section(HtmlWriter& w, const ReportModel& m) {
  const DetectionSummary& d = m.detection;
  section_start(w, "detection", "4", "Detected events",
                "Fixation durations and saccade amplitudes as detected, peak velocity against amplitude beside the main sequence, and "
                "participants whose figures stand apart from the rest.");
  if (!d.present) {
    absent(w, missing_stage(m, "detect", "Detection"));
    w.close();
    return;
  }
  std::uint64_t n_fix = 0;
  for (auto c : d.fixation_duration_ms.counts) n_fix += c;
  figure(w, {"fig-detection-fixations", "detection-fixations", "Fixation durations",
             "every detected fixation (bars) and the fixations cleaning kept (line); the last bin holds everything longer",
             "Histogram of " + thousands(n_fix) + " detected fixation durations in 20 ms bins from 0 to 1000 ms" +
                 (m.cleaning.present ? ", with the kept fixations as a line." : ".")});
  std::uint64_t n_sac = 0;
  for (auto c : d.saccade_amplitude_deg.counts) n_sac += c;
  figure(w, {"fig-detection-amplitudes", "detection-amplitudes", "Saccade amplitudes", "in degrees; the last bin holds everything larger",
             "Histogram of " + thousands(n_sac) + " saccade amplitudes in degrees."});
  figure(w, {"fig-detection-main-sequence", "detection-main-sequence", "Peak velocity against amplitude",
             fmt::format("saccade counts (shade) and the main sequence V = Vmax (1 − e^(−A/{:g})) for Vmax {:g}–{:g} deg/s (band)", d.reference.c_deg,
                         d.reference.v_max_low_deg_s, d.reference.v_max_high_deg_s),
             "Heat map of saccade counts by amplitude and peak velocity, with a band for the main-sequence relation as a plausibility reference. "
             "Detected saccades far below the band suggest noise taken for saccades or a too smooth velocity filter."});
  std::size_t outlying = 0;
  std::string names;
  for (const auto& p : d.participants) {
    if (p.outlying) {
      ++outlying;
      names += (names.empty() ? "" : ", ") + p.participant;
    }
  }
  figure(w, {"fig-detection-outliers", "detection-outliers", "Participants compared",
             fmt::format("robust z-scores (median and MAD across participants); beyond ±{:g} is marked", d.outlier_z),
             fmt::format("Dot chart of robust z-scores of five figures per participant. {} participant(s) beyond ±{:g}{}.", outlying, d.outlier_z,
                         names.empty() ? "" : ": " + names)});
  w.open("p", {{"class", "method"}});
  w.text(fmt::format(
      "Detection method: {}. Robust z-scores after Leys et al. (2013): (value − median) / (1.4826 × MAD) across participants; a participant "
      "stands apart where a figure's |z| is above {:g} and the figure is also more than {:g} % from the median (so that a tight group's "
      "trivial differences raise no flag). With few participants the median and MAD are rough. The velocity ratio is "
      "each saccade's peak velocity over the main sequence at its amplitude (Vmax {:g} deg/s, C {:g} deg, the middle of the band; saccades from 0.5 deg), "
      "median per participant. Leftward saccades are regressions and return sweeps together.",
      d.method.empty() ? std::string("not recorded") : d.method, d.outlier_z, 100 * d.outlier_relative, 0.5 * (d.reference.v_max_low_deg_s + d.reference.v_max_high_deg_s), d.reference.c_deg));
  w.close();
  std::vector<std::vector<std::string>> rows;
  for (const auto& p : d.participants) {
    rows.push_back({p.participant, thousands(p.fixations), thousands(p.saccades), thousands(p.blinks), fmt_num(p.fixations_per_trial, 1),
                    fmt_num(p.median_fixation_ms, 0), fmt_num(p.median_amplitude_deg, 2), fmt_num(p.median_velocity_ratio, 2),
                    fmt_pct(p.regression_share), p.outlying ? "yes" : ""});
  }
  table(w, {"participant", "fixations", "saccades", "blinks", "fixations / trial", "median fixation (ms)", "median amplitude (deg)", "velocity ratio",
            "leftward saccades", "stands apart"},
        rows, "Detected events per participant", {false, true, true, true, true, true, true, true, true, false});
  w.close();
}

void drift_section(HtmlWriter& w, const ReportModel& m) {
  const DriftSummary& d = m.drift;
  section_start(w, "drift", "5", "Line assignment",
                "How sure drift correction was of each trial's lines, and the trials it flagged for a look.");
  if (!d.present) {
    absent(w, missing_stage(m, "align", "Drift correction"));
    w.close();
    return;
  }
  std::string methods;
  for (const auto& x : d.methods) methods += (methods.empty() ? "" : ", ") + x;
  figure(w, {"fig-drift-confidence", "drift-confidence", "Confidence per trial", "every trial; flagged trials in vermillion",
             fmt::format("Histogram of line-assignment confidence (0 to 1) over {} trials by {}; {} flagged.", d.trials, methods, d.flagged)});
  figure(w, {"fig-drift-participants", "drift-participants", "Confidence per participant", "quartiles (bar), median (tick), flagged trials (dots and count)",
             "Chart of each participant's line-assignment confidence: interquartile range, median, and the count of flagged trials."});
  std::vector<std::vector<std::string>> rows;
  const std::size_t shown = std::min<std::size_t>(d.flagged_trials.size(), 500);
  for (std::size_t i = 0; i < shown; ++i) {
    const auto& t = d.flagged_trials[i];
    rows.push_back({t.participant, t.recording, t.trial, t.item, t.cell, t.method, fmt_num(t.confidence, 3)});
  }
  if (rows.empty()) {
    w.element("p", "No trial was flagged.");
  } else {
    table(w, {"participant", "recording", "trial", "item", "cell", "method", "confidence"}, rows,
          shown < d.flagged_trials.size() ? fmt::format("The {} flagged trials of lowest confidence (of {})", shown, d.flagged_trials.size())
                                          : std::string("Flagged trials, lowest confidence first (open one in the trial viewer)"),
          {false, false, false, false, false, false, true}, "flagged");
  }
  w.close();
}

std::string measure_title(const std::string& m) {
  if (m == "first_fixation_ms") return "First fixation duration";
  if (m == "gaze_duration_ms") return "Gaze duration";
  if (m == "go_past_ms") return "Go-past time";
  if (m == "total_time_ms") return "Total reading time";
  return m;
}

void measures_section(HtmlWriter& w, const ReportModel& m) {
  const MeasuresSummary& ms = m.measures;
  section_start(w, "measures", "6", "Reading measures",
                "The distribution of each duration measure per region role and design cell, with each participant's mean, and the skipping "
                "and regression probabilities per region role.");
  if (!ms.present) {
    absent(w, missing_stage(m, "measure", "The measure stage"));
    w.close();
    return;
  }
  w.open("div", {{"class", "grid-2"}});
  for (const auto& measure : ms.measures) {
    std::string parts;
    for (const auto& d : ms.distributions) {
      if (d.measure != measure || d.role.empty()) continue;
      parts += fmt::format("{}{} {}: median {} ms (n {})", parts.empty() ? "" : "; ", d.role, d.cell, fmt_num(d.summary.median, 0), d.summary.n);
    }
    figure(w, {"fig-measures-" + measure, "measures-distribution", measure_title(measure),
               "in ms: box = quartiles, whiskers = 5–95 %, diamond = mean, dots = participants' means",
               "Box plots of " + measure_title(measure) + " per region role and design cell. " + parts + "."},
           "measure-" + measure);
  }
  w.close();
  std::string probs;
  for (const auto& p : ms.probabilities) {
    if (p.measure != "skipping") continue;
    probs += fmt::format("{}{} {} {}", probs.empty() ? "" : "; ", p.role, p.cell, fmt_pct(p.probability, 0));
  }
  figure(w, {"fig-measures-probabilities", "measures-probabilities", "Skipping and regressions by region role",
             "pooled probability (bar) with each participant's (dots); regression out over first-pass readings, in over fixated ones",
             "Bar charts of skipping, regression-out and regression-in probabilities per region role and design cell. Skipping: " + probs + "."});
  w.close();
}

void viewer_section(HtmlWriter& w, const ReportModel& m) {
  section_start(w, "viewer", "7", "One trial at a time",
                "The item's text as laid out on the screen, the fixations in order (area by duration) with the saccades between them, fixations "
                "cleaning removed marked with their rule, and the gaze's x and y over time below.");
  if (!m.viewer.present) {
    absent(w, "No recordings in the store.");
    w.close();
    return;
  }
  w.open("form", {{"class", "viewer-controls"}, {"id", "viewer-controls"}});
  w.open("label");
  w.text("participant ");
  w.open("select", {{"id", "viewer-recording"}});
  for (std::size_t i = 0; i < m.viewer.recordings.size(); ++i) {
    const auto& r = m.viewer.recordings[i];
    w.element("option", {{"value", std::to_string(i)}}, r.participant + (r.session.empty() ? "" : " · session " + r.session));
  }
  w.close();
  w.close();
  w.open("label");
  w.text("trial ");
  w.open("select", {{"id", "viewer-trial"}});
  w.close();
  w.close();
  w.element("button", {{"type", "button"}, {"id", "viewer-prev"}, {"aria-label", "previous trial"}}, "‹ previous");
  w.element("button", {{"type", "button"}, {"id", "viewer-next"}, {"aria-label", "next trial"}}, "next ›");
  w.open("label");
  w.empty("input", {{"type", "checkbox"}, {"id", "viewer-aligned"}});
  w.text(" on assigned lines");
  w.close();
  w.open("label");
  w.empty("input", {{"type", "checkbox"}, {"id", "viewer-removed"}, {"checked", ""}});
  w.text(" removed fixations");
  w.close();
  w.close();
  w.element("p", {{"class", "viewer-status"}, {"id", "viewer-status"}, {"aria-live", "polite"}}, "");
  figure(w, {"fig-viewer-scanpath", "viewer-scanpath", "Fixations over the text", "numbered in order; area by duration; crosses: removed by cleaning",
             "The chosen trial's text with its regions and the fixations drawn over it in order."},
         "wide");
  figure(w, {"fig-viewer-time", "viewer-time", "Gaze over time", "x and y in px (lines), fixations (shaded spans: blue kept, red removed)",
             "Line chart of the chosen trial's horizontal and vertical gaze position over time, with the fixations as spans."},
         "wide");
  w.close();
}

}  // namespace

void pack_viewer_recording(ViewerRecording& r) {
  if (r.packed) return;
  std::vector<unsigned char> samples;
  PackedViewerTrials p;
  p.block = pack(recording_json(r, samples), samples);
  p.trials = r.trials.size();
  p.kept_trials = static_cast<std::size_t>(std::count_if(r.trials.begin(), r.trials.end(), [](const ViewerTrial& t) { return t.kept; }));
  r.packed = std::move(p);
  std::vector<ViewerTrial>().swap(r.trials);
}

const std::string& report_asset(const std::string& name) {
  for (const auto& [n, text] : embedded_assets()) {
    if (n == name) return text;
  }
  throw std::logic_error("report asset not carried in the program: " + name);
}

std::string report_html(const ReportModel& m) {
  json data;
  data["run"] = run_json(m.run);
  data["quality"] = quality_json(m.quality);
  data["cleaning"] = cleaning_json(m.cleaning);
  data["detection"] = detection_json(m.detection);
  data["drift"] = drift_json(m.drift);
  data["measures"] = measures_json(m.measures);
  data["viewer"] = viewer_meta(m.viewer);
  // Trials per participant for the run summary.
  json trials = json::array();
  std::map<std::string, std::pair<std::size_t, std::size_t>> per;
  for (const auto& r : m.viewer.recordings) {
    if (r.packed) {
      per[r.participant].first += r.packed->kept_trials;
      per[r.participant].second += r.packed->trials - r.packed->kept_trials;
    }
    for (const auto& t : r.trials) (t.kept ? per[r.participant].first : per[r.participant].second)++;
  }
  for (const auto& [p, n] : per) trials.push_back({{"participant", p}, {"kept", n.first}, {"excluded", n.second}});
  data["run"]["trials"] = trials;

  HtmlWriter w;
  const std::string title = (m.run.study_name.empty() ? std::string("Study") : m.run.study_name) + " · gazemill study report";
  w.empty("!DOCTYPE html");
  w.newline();
  w.open("html", {{"lang", "en"}});
  w.open("head");
  w.empty("meta", {{"charset", "utf-8"}});
  w.empty("meta", {{"name", "viewport"}, {"content", "width=device-width, initial-scale=1"}});
  w.empty("meta", {{"name", "generator"}, {"content", "gazemill " + m.run.report_tool_version}});
  // Nothing may be fetched: no network, no file beside the page. Vega compiles its expressions with Function().
  w.empty("meta", {{"http-equiv", "Content-Security-Policy"},
                   {"content", "default-src 'none'; script-src 'unsafe-inline' 'unsafe-eval'; style-src 'unsafe-inline'; img-src data:; "
                               "connect-src 'none'; font-src 'none'; form-action 'none'; base-uri 'none'"}});
  w.element("title", title);
  w.newline();
  w.style(report_asset("report.css"));
  w.close();
  w.newline();
  w.open("body");
  w.open("header", {{"class", "page-head"}});
  w.element("p", {{"class", "kicker"}}, "gazemill study report");
  w.element("h1", m.run.study_name.empty() ? std::string("Study") : m.run.study_name);
  w.element("p", {{"class", "byline"}},
            fmt::format("{} participants · {} trials · written {} by gazemill {}", m.run.participants, m.run.trials, m.run.report_created_utc,
                        m.run.report_tool_version));
  w.open("nav", {{"aria-label", "sections"}});
  w.open("ol");
  for (const auto& [id, name] : std::vector<std::pair<std::string, std::string>>{{"run", "The run"},
                                                                                 {"quality", "Signal quality"},
                                                                                 {"cleaning", "Cleaning"},
                                                                                 {"detection", "Detected events"},
                                                                                 {"drift", "Line assignment"},
                                                                                 {"measures", "Reading measures"},
                                                                                 {"viewer", "One trial"}}) {
    w.open("li");
    w.element("a", {{"href", "#" + id}}, name);
    w.close();
  }
  w.close();
  w.close();
  w.close();
  w.newline();
  w.open("main");
  run_section(w, m);
  quality_section(w, m);
  cleaning_section(w, m);
  detection_section(w, m);
  drift_section(w, m);
  measures_section(w, m);
  viewer_section(w, m);
  w.close();
  w.open("footer", {{"class", "page-foot"}});
  w.element("p", "Colours: the palette of Okabe & Ito (2008), Color Universal Design, chosen to stay distinct for the common forms of colour "
                 "blindness; sequential shades from viridis. Charts drawn with Vega 5 (BSD-3-Clause, University of Washington Interactive Data "
                 "Lab), carried in this page from Debian's libjs-vega. The data shown are those of the store named above; nothing is fetched.");
  w.close();
  w.newline();
  w.script(json_for_script(data), {{"type", "application/json"}, {"id", "gazemill-data"}});
  if (m.viewer.present) {
    w.script(pack(layouts_json(m.viewer), {}), {{"type", "application/octet-stream"}, {"id", "gazemill-viewer-layouts"}});
    // Each recording packs on its own (JSON, deflate, base64): on every core, written in order.
    const auto& recs = m.viewer.recordings;
    std::vector<std::string> packed(recs.size());
    std::atomic<std::size_t> next{0};
    std::vector<std::exception_ptr> errors(recs.size());
    auto worker = [&] {
      for (std::size_t i; (i = next++) < recs.size();) {
        try {
          if (recs[i].packed) continue;  // written from the model as it is
          std::vector<unsigned char> samples;
          const json r = recording_json(recs[i], samples);
          packed[i] = pack(r, samples);
        } catch (...) {
          errors[i] = std::current_exception();
        }
      }
    };
    std::vector<std::thread> pool;
    const std::size_t threads = std::min<std::size_t>(std::max(1u, std::thread::hardware_concurrency()), recs.size());
    for (std::size_t t = 1; t < threads; ++t) pool.emplace_back(worker);
    worker();
    for (auto& t : pool) t.join();
    for (std::size_t i = 0; i < recs.size(); ++i) {
      if (errors[i]) std::rethrow_exception(errors[i]);
      w.script(recs[i].packed ? recs[i].packed->block : packed[i], {{"type", "application/octet-stream"}, {"id", "gazemill-viewer-r" + std::to_string(i)}});
    }
  }
  w.comment(" Vega and topojson-client, from Debian's libjs-vega:\n" + report_asset("vega-copyright"));
  std::string libraries = report_asset("module-loader.js");
  for (const char* name : {"topojson-client", "vega-util", "vega-time", "vega-format", "vega-statistics", "vega-expression", "vega-event-selector",
                           "vega-selection", "vega-scale", "vega-loader", "vega-dataflow", "vega-canvas", "vega-scenegraph", "vega-functions",
                           "vega-runtime", "vega-view", "vega-parser", "vega-transforms", "vega-view-transforms", "vega-encode"}) {
    std::string code = report_asset(name);
    // Source-map comments would name files that are not here.
    if (const auto p = code.rfind("//# sourceMappingURL="); p != std::string::npos) code.erase(p);
    libraries += "\ngzmDefine(\"" + std::string(name) + "\", function (exports, module, require) {\n" + code + "\n});\n";
  }
  w.script(libraries);
  w.script(report_asset("report.js"));
  w.close();
  w.close();
  return w.finish() + "\n";
}

void write_report_html(const ReportModel& model, const std::string& path) { write_file_atomically(path, report_html(model)); }

}  // namespace gazemill
