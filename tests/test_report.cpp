// The study report: its content assembled from a store (app/report_data)
// agrees with what the store holds, and its page (io/report_html) escapes
// every text and carries its data in a form that reads back. The page in a
// real browser is checked by tests/python/check_report_browser.py.

#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <optional>
#include <regex>
#include <set>
#include <sstream>

#include <zlib.h>

#include "app/protocol_parser.h"
#include "app/report_command.h"
#include "app/report_data.h"
#include "app/verify.h"
#include "io/cleaning_io.h"
#include "io/report_html.h"
#include "io/study_store.h"
#include "tests/stage_helpers.h"
#include "test_support.h"

using namespace gazemill;
using namespace gazemill::test_support;
namespace fs = std::filesystem;

namespace {

// Rules that remove something from the demo study at every level but the participant's.
const char* kRules = R"(
[[cleaning]]
name = "merge under 80 ms within 0.5 deg"
kind = "merge_short_fixations"
max_duration_ms = 80
max_distance_deg = 0.5
max_gap_ms = 50

[[cleaning]]
name = "shorter than 80 ms"
kind = "delete_short_fixations"
min_duration_ms = 80

[[cleaning]]
name = "next to a blink"
kind = "delete_fixations_near_blinks"
within_ms = 50

[[cleaning]]
name = "more than 2 % data loss"
kind = "exclude_trials_with_data_loss"
max_missing_percent = 2
)";

struct DemoStudy {
  TempDir dir;
  std::string store;
  StudyRunReport run;  // what the run lends the report
  DemoStudy() {
    fs::copy(std::string(GAZEMILL_FIXTURES) + "/demo-study", dir.path() / "study", fs::copy_options::recursive);
    const std::string proto = (dir.path() / "study" / "gazemill.toml").string();
    std::ofstream(proto, std::ios::app) << kRules;
    StudyRunOptions o;
    o.store_path = store = (dir.path() / "s.gzm.h5").string();
    run = run_study(parse_protocol_file(proto), o);
  }
};

DemoStudy& demo() {
  static DemoStudy d;
  return d;
}

std::string data_block(const std::string& html) {
  const std::string open = "<script type=\"application/json\" id=\"gazemill-data\">";
  const auto a = html.find(open);
  const auto b = html.find("</script>", a);
  return html.substr(a + open.size(), b - a - open.size());
}

std::string script_block(const std::string& html, const std::string& id) {
  const auto a = html.find("id=\"" + id + "\">");
  const auto b = html.find("</script>", a);
  return html.substr(a + id.size() + 6, b - a - id.size() - 6);
}

std::vector<unsigned char> from_base64(const std::string& s) {
  // RFC 4648 base64, the alphabet and padding written out here.
  const std::string alphabet = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  std::vector<unsigned char> out;
  std::uint32_t acc = 0;
  int bits = 0;
  for (char c : s) {
    if (c == '=') break;
    acc = (acc << 6) | static_cast<std::uint32_t>(alphabet.find(c));
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out.push_back(static_cast<unsigned char>((acc >> bits) & 0xff));
    }
  }
  return out;
}

}  // namespace

// Conservation, the audit's own rule (README, "Cleaning and its audit"):
// every input fixation is kept or removed, so the viewer, which draws both,
// holds exactly the detected fixations, and the flow ends where the audit's
// kept count ends.
TEST(ReportData, CountsAgreeWithTheStore) {
  const ReportModel m = assemble_report(demo().store);
  StudyStoreReader store(demo().store);
  EXPECT_EQ(m.run.participants, 4u);
  EXPECT_EQ(m.run.recordings, 4u);
  std::size_t trials = 0;
  std::set<std::string> cells;  // as "factor=level, ..." over every trial, NA where a trial has no level
  const Protocol protocol = parse_protocol_file((demo().dir.path() / "study" / "gazemill.toml").string());
  for (const auto& id : store.recording_ids()) {
    for (const auto& t : store.read_recording(id, false).trials) {
      ++trials;
      std::string cell;
      for (const auto& f : protocol.design.factors) {
        const auto v = t.variables.find(f);
        cell += (cell.empty() ? "" : ", ") + f + "=" + (v == t.variables.end() || v->second.empty() ? std::string("NA") : v->second);
      }
      cells.insert(cell);
    }
  }
  EXPECT_EQ(m.run.trials, trials);
  std::uint64_t samples = 0, detected = 0, kept = 0, viewer = 0, removed_drawn = 0;
  for (const auto& id : store.recording_ids()) {
    samples += store.sample_summary(id).sample_count;
    detected += store.read_events(id).fixations.size();
    kept += read_clean_fixations(store, id).size();
  }
  for (const auto& r : m.viewer.recordings) {
    for (const auto& t : r.trials) {
      viewer += t.fixations.size();
      for (const auto& f : t.fixations) removed_drawn += f.removed_by >= 0;
    }
  }
  EXPECT_EQ(m.run.samples, samples);
  EXPECT_EQ(m.run.fixations_detected, detected);
  EXPECT_EQ(m.run.fixations_kept, kept);
  EXPECT_EQ(viewer, detected);
  EXPECT_EQ(removed_drawn, detected - kept);
  EXPECT_GT(detected - kept, 0u);
  // The flow over every cell ends at the kept count, rule after rule never growing.
  ASSERT_TRUE(m.cleaning.present);
  ASSERT_EQ(m.cleaning.rules.size(), 4u);
  std::uint64_t last = 0, before = UINT64_MAX;
  for (const auto& f : m.cleaning.flow) {
    if (f.level != "fixation" || !f.cell.empty()) continue;
    EXPECT_LE(f.remaining, before);
    before = f.remaining;
    last = f.remaining;
  }
  EXPECT_EQ(last, kept);
  // Quality: every sample of every participant counted once.
  std::uint64_t q_samples = 0;
  for (const auto& q : m.quality) q_samples += q.samples;
  EXPECT_EQ(q_samples, samples);
  // The design cells of the trials, named by the protocol's factors.
  EXPECT_EQ(m.run.cells, std::vector<std::string>(cells.begin(), cells.end()));
  // Every stage ran and is current, each with the protocol the ingest hashed (one run, one protocol file).
  for (const auto& s : m.run.stages) {
    EXPECT_EQ(s.state, "current") << s.stage;
    EXPECT_EQ(s.protocol_sha256, m.run.protocol_sha256) << s.stage;
  }
}

// Source: the simulator's own set precision (fixtures/demo-study/simulation.json,
// noise_rms_s2s_deg 0.03, fixational noise defined as RMS sample-to-sample
// distance after Holmqvist et al. 2012). The report measures it back from
// the samples inside the detected fixations.
TEST(ReportData, PrecisionMeasuresTheSimulatedNoise) {
  const ReportModel m = assemble_report(demo().store);
  ASSERT_EQ(m.quality.size(), 4u);
  for (const auto& q : m.quality) {
    EXPECT_GT(q.precision_fixations, 100u) << q.participant;
    EXPECT_NEAR(q.rms_s2s_deg, 0.03, 0.006) << q.participant;
    // White noise: RMS-S2S / STD near sqrt(2) (methods.md §11); the fixations' slow movement lowers it.
    EXPECT_GT(q.rms_s2s_deg / q.std_deg, 0.8) << q.participant;
    EXPECT_LT(q.rms_s2s_deg / q.std_deg, 1.6) << q.participant;
    EXPECT_NEAR(q.measured_rate_hz, 250.0, 1e-9) << q.participant;
  }
}

// The report's sample figures come from the digest detect keeps with its
// events; a store without digests (or a report asked for another number of
// points) makes them from the samples instead. Both must give one page: the
// digest is only where the figures are computed, never what they are.
// (Consistency of two ways, no outside source; the figures themselves are
// checked against the simulator above and in tests/python/check_report_figures.py.)
TEST(ReportData, FiguresFromTheStoredDigestEqualThoseFromTheSamples) {
  TempDir dir;
  const std::string copy = (dir.path() / "no-digest.gzm.h5").string();
  fs::copy_file(demo().store, copy);
  {
    H5::H5File f(copy, H5F_ACC_RDWR);
    H5::Group recordings = f.openGroup("/recordings");
    std::size_t removed = 0;
    for (hsize_t i = 0; i < recordings.getNumObjs(); ++i) {
      const std::string path = recordings.getObjnameByIdx(i) + "/events/sample_digest";
      if (H5Lexists(recordings.getId(), path.c_str(), H5P_DEFAULT) > 0) {
        recordings.unlink(path);
        ++removed;
      }
    }
    ASSERT_EQ(removed, 4u) << "detect keeps a digest per recording";
  }
  // verify takes a store without digests (one made before they were kept) as it is.
  std::ostringstream said;
  EXPECT_TRUE(verify_store(copy, said)) << said.str();
  EXPECT_NE(said.str().find("no sample digests"), std::string::npos) << said.str();
  ReportModel with = assemble_report(demo().store), without = assemble_report(copy);
  with.run.store_path = without.run.store_path = "";
  with.run.report_created_utc = without.run.report_created_utc = "";
  EXPECT_EQ(report_html(with), report_html(without));
  // A run lends the report the events, lines, cleaning and audit it holds;
  // the page is the one made from the store alone, whichever it lends.
  const StudyRunReport& run = demo().run;
  ASSERT_TRUE(run.events && run.alignment && run.cleaned && run.cleaning_rows && run.audit);
  ReportDataOptions all;
  all.events = run.events.get();
  all.alignment = run.alignment.get();
  all.cleaned = run.cleaned.get();
  all.cleaning_rows = run.cleaning_rows.get();
  all.audit = &*run.audit;
  ReportDataOptions events_only;
  events_only.events = run.events.get();
  ReportDataOptions cleaning_only;
  cleaning_only.cleaned = run.cleaned.get();
  cleaning_only.cleaning_rows = run.cleaning_rows.get();
  for (const ReportDataOptions* lent : {&all, &events_only, &cleaning_only}) {
    ReportModel from_run = assemble_report(demo().store, *lent);
    from_run.run.store_path = "";
    from_run.run.report_created_utc = "";
    EXPECT_EQ(report_html(from_run), report_html(with));
  }
  // What is lent is what the page shows: lines lent without a trial's
  // assignments leave that trial without them on the page.
  std::vector<RecordingAlignment> fewer = *run.alignment;
  ASSERT_FALSE(fewer.empty());
  fewer.front().trials.clear();
  fewer.front().fixations.clear();
  ReportDataOptions other_lines = all;
  other_lines.alignment = &fewer;
  ReportModel differs = assemble_report(demo().store, other_lines);
  differs.run.store_path = "";
  differs.run.report_created_utc = "";
  EXPECT_NE(report_html(differs), report_html(with));
  ReportDataOptions other;
  other.max_points_per_trial = 123;  // not the digest's: made from the samples
  const ReportModel coarse = assemble_report(demo().store, other);
  ASSERT_FALSE(coarse.viewer.recordings.empty());
  std::size_t longest = 0;
  for (const auto& r : coarse.viewer.recordings) {
    for (const auto& t : r.trials) longest = std::max(longest, t.x_px.size());
  }
  EXPECT_LE(longest, 123u);
  EXPECT_GT(longest, 60u);
}

// A run packs each recording's viewer trials as soon as they are made, so
// that a long study's report holds them compressed (bench/memory): the page
// is the one made from the whole trials, byte for byte, at any thread count,
// and the per-participant trial counts the page shows are unchanged (our design, no source).
TEST(ReportData, PackedAsMadeIsTheSamePage) {
  ReportModel whole = assemble_report(demo().store);
  whole.run.store_path = "";
  whole.run.report_created_utc = "";
  std::size_t kept = 0, trials = 0;
  for (const auto& r : whole.viewer.recordings) {
    for (const auto& t : r.trials) kept += t.kept;
    trials += r.trials.size();
  }
  ASSERT_GT(trials, kept) << "the demo's rules exclude some trials";
  for (std::size_t threads : {1u, 3u}) {
    ReportDataOptions o;
    o.pack_viewer = true;
    o.threads = threads;
    ReportModel packed = assemble_report(demo().store, o);
    packed.run.store_path = "";
    packed.run.report_created_utc = "";
    std::size_t packed_kept = 0, packed_trials = 0;
    for (const auto& r : packed.viewer.recordings) {
      ASSERT_TRUE(r.packed) << r.id;
      EXPECT_TRUE(r.trials.empty()) << r.id;
      packed_kept += r.packed->kept_trials;
      packed_trials += r.packed->trials;
    }
    EXPECT_EQ(packed_kept, kept);
    EXPECT_EQ(packed_trials, trials);
    EXPECT_EQ(report_html(packed), report_html(whole)) << threads << " threads";
  }
}

// The viewer's text is the protocol's layout: every word of an item's text at
// the left edge pipeline/text_layout computes for it (here: monospaced 12 px
// from the 100 px margin).
TEST(ReportData, ViewerTextIsTheProtocolsLayout) {
  const ReportModel m = assemble_report(demo().store);
  ASSERT_FALSE(m.viewer.layouts.empty());
  const auto& first = m.viewer.recordings.at(0).trials.at(0);
  ASSERT_GE(first.layout, 0);
  const auto& layout = m.viewer.layouts.at(static_cast<std::size_t>(first.layout));
  ASSERT_FALSE(layout.words.empty());
  EXPECT_DOUBLE_EQ(layout.words.front().left_px, 100.0);
  for (const auto& w : layout.words) EXPECT_DOUBLE_EQ(std::fmod(w.left_px - 100.0, 12.0), 0.0) << w.text;
  EXPECT_EQ(layout.lines.size(), static_cast<std::size_t>(layout.words.back().line + 1));
  // Roles from the items file (3=target 4=spillover in the demo's items).
  std::size_t targets = 0;
  for (const auto& r : layout.regions) targets += r.role == "target";
  EXPECT_EQ(targets, 1u);
}

// Escaping (HTML 5, "Restrictions for contents of script elements" and the
// serialisation of text and attribute values): a study or rule named with
// markup never becomes markup, and the data's JSON cannot close its element.
TEST(ReportHtml, EscapesEveryText) {
  ReportModel m;
  m.run.study_name = "<script>alert('name')</script>";
  m.run.notes.push_back("a \"quoted\" & <b>bold</b> note");
  m.cleaning.present = true;
  m.cleaning.rules.push_back({"</script><script>alert(1)</script>", "delete_short_fixations", "fixation"});
  m.viewer.present = true;
  m.viewer.rules = {"</script><!--"};
  m.viewer.recordings.push_back({"r<1>", "p\"1", "", {}, std::nullopt});
  const std::string html = report_html(m);
  EXPECT_EQ(html.find("<script>alert"), std::string::npos);
  EXPECT_EQ(html.find("<b>bold"), std::string::npos);
  EXPECT_NE(html.find("&lt;script&gt;alert('name')&lt;/script&gt;"), std::string::npos);  // as text (quotes need no escape there)
  // Exactly five script elements: the data, the viewer's packed layouts and its one recording, the libraries, the page's own script.
  std::size_t opens = 0, closes = 0;
  for (std::size_t p = 0; (p = html.find("<script", p)) != std::string::npos; ++p) ++opens;
  for (std::size_t p = 0; (p = html.find("</script", p)) != std::string::npos; ++p) ++closes;
  EXPECT_EQ(opens, 5u);
  EXPECT_EQ(closes, 5u);
  const auto j = nlohmann::json::parse(data_block(html));
  EXPECT_EQ(j["run"]["study"], "<script>alert('name')</script>");
  EXPECT_EQ(j["cleaning"]["rules"][0]["name"], "</script><script>alert(1)</script>");
  EXPECT_EQ(j["viewer"]["rules"][0], "</script><!--");
}

// The time course reads back: per value an unsigned LEB128 varint (as DWARF
// and Protocol Buffers write them), 0 for an empty bin, else 1 + the zigzag
// code of the step from the axis's last value (the encoding the page's
// script decodes); base64 as RFC 4648.
TEST(ReportHtml, TimeCourseReadsBack) {
  ReportModel m;
  m.viewer.present = true;
  ViewerTrial t;
  t.trial = "1";
  t.bin_ms = 10;
  t.x_px = {100.4f, -3.6f, std::nanf(""), 40000.0f, 39999.0f};
  t.y_px = {250.0f, 251.0f, 252.0f, std::nanf(""), 250.0f};
  m.viewer.recordings.push_back({"r1", "p1", "", {t}, std::nullopt});
  // The recording's packed block: zlib (RFC 1950) over a uint32 length, the JSON, the time courses.
  const auto packed = from_base64(script_block(report_html(m), "gazemill-viewer-r0"));
  std::vector<unsigned char> plain(1 << 16);
  uLongf size = plain.size();
  ASSERT_EQ(uncompress(plain.data(), &size, packed.data(), packed.size()), Z_OK);
  plain.resize(size);
  const std::uint32_t n = plain[0] | (plain[1] << 8) | (plain[2] << 16) | (static_cast<std::uint32_t>(plain[3]) << 24);
  const auto j = nlohmann::json::parse(std::string(plain.begin() + 4, plain.begin() + 4 + n));
  const auto where = j["trials"][0]["s"];
  const std::vector<unsigned char> bytes(plain.begin() + 4 + n + where[0].get<long>(), plain.begin() + 4 + n + where[0].get<long>() + where[1].get<long>());
  std::vector<std::optional<long>> values;
  long last[2] = {0, 0};
  int axis = 0;
  for (std::size_t i = 0; i < bytes.size();) {
    std::uint64_t code = 0;
    int shift = 0;
    unsigned char b;
    do {
      b = bytes[i++];
      code |= static_cast<std::uint64_t>(b & 0x7f) << shift;
      shift += 7;
    } while (b & 0x80);
    if (code == 0) {
      values.push_back(std::nullopt);
    } else {
      const std::uint64_t z = code - 1;
      last[axis] += (z % 2 == 0) ? static_cast<long>(z / 2) : -static_cast<long>((z + 1) / 2);
      values.push_back(last[axis]);
    }
    axis = 1 - axis;
  }
  const std::vector<std::optional<long>> expected = {100, 250, -4, 251, std::nullopt, 252, 40000, std::nullopt, 39999, 250};
  EXPECT_EQ(values, expected);
  // A small step costs one byte: y back at 250 from 252 is a step of -2, zigzag 3, code 4.
  EXPECT_EQ(bytes.back(), 4u);
}

// Every chart is a figure with a title and an alternative text, on a page
// built from the demo study (the browser test renders the same page).
TEST(ReportHtml, EveryChartHasATitleAndAlternativeText) {
  const std::string html = report_html(assemble_report(demo().store));
  const std::regex chart(R"re(<figure class="chart[^"]*" id="([^"]+)"><figcaption><span class="chart-title">([^<]+)</span>)re");
  const std::regex alt(R"re(<div class="vega" data-chart="([^"]+)" role="img" aria-label="([^"]*)">)re");
  std::size_t figures = 0, alts = 0;
  for (auto it = std::sregex_iterator(html.begin(), html.end(), chart); it != std::sregex_iterator(); ++it) ++figures;
  for (auto it = std::sregex_iterator(html.begin(), html.end(), alt); it != std::sregex_iterator(); ++it) {
    EXPECT_GT((*it)[2].length(), 20) << (*it)[1];
    ++alts;
  }
  EXPECT_GE(figures, 15u);
  EXPECT_EQ(figures, alts);
}

TEST(ReportCommand, WritesBesideTheStoreByDefault) {
  EXPECT_EQ(default_report_path("/a/b/harbour-news.gzm.h5"), "/a/b/harbour-news-report.html");
  EXPECT_EQ(default_report_path("store.h5"), "store-report.html");
  EXPECT_EQ(default_report_path("/x/odd-name"), "/x/odd-name-report.html");
}
