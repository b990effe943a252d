// The measure stage end to end: the simulated study from raw export to
// measures.tsv, the simulated condition effect recovered in the right
// direction, the boxes-file route agreeing with the text route, and the
// region files' errors.

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>

#include "app/clean.h"
#include "tests/stage_helpers.h"
#include "app/align.h"
#include "app/clean.h"
#include "app/measure.h"
#include "pipeline/design.h"
#include "app/protocol_parser.h"
#include "app/verify.h"
#include <sstream>
#include "io/region_files.h"
#include "io/study_store.h"
#include "io/tsv_table.h"
#include "measures/measure_aggregates.h"
#include "pipeline/input_error.h"
#include "sim/study_export.h"
#include "sim/study_simulator.h"
#include "test_support.h"

using namespace gazemill;
using gazemill::test_support::TempDir;
namespace fs = std::filesystem;

namespace {

const char* kStages = R"(
[detection]
method = "ivt"
[detection.parameters]
velocity_threshold_deg_s = 20
sg_window_ms = 10

[[cleaning]]
name = "short"
kind = "delete_short_fixations"
min_duration_ms = 80
)";

// The demo design's first 12 sentence items and 2 passages: the passages'
// drift puts fixations between the lines.
std::string simulated(const TempDir& d, int participants) {
  sim::SimulationConfig c;
  c.design = sim::demo_design(12, 2);
  c.design.participants = participants;
  c.signal.sample_rate_hz = 500;
  c.seed = 99;
  sim::ExportOptions eo;
  eo.bids = false;
  const std::string proto = sim::export_study(sim::simulate_study(c), (d.path() / "study").string(), eo);
  std::ofstream(proto, std::ios::app) << kStages;
  return proto;
}

}  // namespace

TEST(MeasureCommand, RawExportToMeasuresWithTheConditionEffect) {
  TempDir d;
  const std::string proto = simulated(d, 16);
  const Protocol p = parse_protocol_file(proto);
  const std::string store = d.file("s.gzm.h5");
  ingest_study(p, store);
  detect_study(p, store);
  clean_study(p, store, d.file("out"));
  const auto rows = measure_study(p, store, d.file("out"));
  for (const char* f : {"measures.tsv", "measures_wide.tsv", "measures_by_item_region.tsv", "measures_by_role.tsv", "measures_by_participant.tsv"}) {
    EXPECT_TRUE(fs::exists(fs::path(d.file("out")) / f)) << f;
  }
  // The simulated reader dwells longer on a rare target word and on the region after it
  // (sim/reader_model.h): the measures must show it in that direction.
  double ffd[2] = {0, 0}, gd[2] = {0, 0}, spill[2] = {0, 0};
  for (const auto& a : aggregate_by_role(rows).rows) {
    const int c = cell_levels(a.cell).at(0) == "rare" ? 1 : 0;
    if (a.key.at(0) == "target") {
      ffd[c] = *a.durations.at("first_fixation_ms").mean;
      gd[c] = *a.durations.at("gaze_duration_ms").mean;
    } else if (a.key.at(0) == "spillover") {
      spill[c] = *a.durations.at("first_fixation_ms").mean;
    }
  }
  EXPECT_GT(ffd[1], ffd[0] + 15) << "first fixation on the target";
  EXPECT_GT(gd[1], gd[0] + 15) << "gaze duration on the target";
  EXPECT_GT(spill[1], spill[0]) << "spillover";

  // The long table: one row per participant x trial x region x measure.
  TsvTable longt(d.file("out/measures.tsv"));
  EXPECT_EQ(longt.rows(), rows.size() * measure_names().size());
  TsvTable wide(d.file("out/measures_wide.tsv"));
  EXPECT_EQ(wide.rows(), rows.size());
  EXPECT_TRUE(wide.has("preceding_gaze_duration_ms"));
  EXPECT_TRUE(wide.has("following_region_letters"));
  // Skipped regions have NA first-pass values, never 0.
  for (std::size_t r = 0; r < wide.rows(); ++r) {
    if (wide.text(r, "skipped_first_pass") == "1") {
      EXPECT_EQ(wide.text(r, "gaze_duration_ms"), "NA");
    }
  }
  StudyStoreReader s(store);
  EXPECT_TRUE(s.exists("measures/wide/gaze_duration_ms"));
  EXPECT_TRUE(s.exists("provenance/stages/measure"));
}

TEST(MeasureCommand, BoxesFileAndItemsFileGiveTheSameMeasures) {
  TempDir d;
  const std::string proto = simulated(d, 2);
  Protocol p = parse_protocol_file(proto);
  const std::string store = d.file("s.gzm.h5");
  ingest_study(p, store);
  detect_study(p, store);
  clean_study(p, store, d.file("out"));
  StudyStoreReader s(store);
  const auto cleaned = cleaned_recordings(s);
  const auto from_text = measure_rows(cleaned, align_study(p, load_regions(p), cleaned), load_regions(p), p.regions, p.design);
  RegionSpec boxes = p.regions;
  boxes.items_file.clear();
  boxes.boxes_file = "regions.tsv";
  Protocol q = p;
  q.regions = boxes;
  const auto from_boxes = measure_rows(cleaned, align_study(q, load_regions(q), cleaned), load_regions(q), q.regions, q.design);
  ASSERT_EQ(from_text.size(), from_boxes.size());
  for (std::size_t i = 0; i < from_text.size(); ++i) {
    EXPECT_EQ(from_text[i].gaze_duration_ms, from_boxes[i].gaze_duration_ms) << i;
    EXPECT_EQ(from_text[i].go_past_ms, from_boxes[i].go_past_ms) << i;
    EXPECT_EQ(from_text[i].region_role, from_boxes[i].region_role) << i;
  }
}

TEST(MeasureCommand, RegionFileErrorsNameFileLineAndColumn) {
  TempDir d;
  auto expect = [&](const std::string& text, std::size_t line, const std::string& field) {
    const auto path = d.write("r.tsv", text);
    try {
      read_region_boxes(path, 12, {"frequency"});
      FAIL() << text;
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().file, path);
      EXPECT_EQ(e.where().line, line) << e.what();
      EXPECT_EQ(e.where().field, field) << e.what();
    }
  };
  const std::string head = "item\tregion\tlabel\tleft_px\ttop_px\tright_px\tbottom_px\tline\n";
  expect(head + "1\t1\tThe\t100\t200\t150\t240\t1\n1\tx\tdog\t150\t200\t190\t240\t1\n", 3, "region");
  expect(head + "1\t1\tThe\t100\t200\t90\t240\t1\n", 2, "right_px");
  expect(head + "1\t1\tThe\t100\t200\t150\t240\n", 2, "");
  expect(head + "1\t2\tdog\t150\t200\t190\t240\t1\n", 0, "region");  // region 1 missing
  expect("item\tlabel\n1\tThe\n", 1, "region");
  // Found by fuzzing: a huge line number was cast to int unchecked; a huge
  // region number would have sized a vector of billions.
  expect(head + "1\t1\tThe\t100\t200\t150\t240\t91111111111111111111111111111\n", 2, "line");
  expect(head + "1\t2000000000\tThe\t100\t200\t150\t240\t1\n", 2, "region");
  expect(head + "1\t1.5\tThe\t100\t200\t150\t240\t1\n", 2, "region");
  expect(head + "1\t1\tThe\tnan\t200\t150\t240\t1\n", 2, "left_px");
  // A byte-order mark before the header is no part of the first column's name.
  EXPECT_EQ(read_region_boxes(d.write("bom.tsv", "\xEF\xBB\xBF" + head + "1\t1\tThe\t100\t200\t150\t240\t1\n"), 12, {}).size(), 1u);
  // A column that is neither the file's nor a design factor is named, with the factors there are
  // (a misspelt factor would otherwise give every trial the same regions).
  expect("item\tfrequncy\tregion\tlabel\tleft_px\ttop_px\tright_px\tbottom_px\tline\n1\trare\t1\tThe\t100\t200\t150\t240\t1\n", 1,
         "frequncy");
  // Boxes that overlap (a row given twice, a box reaching into the next) would
  // put a fixation in two regions; boxes that only touch are the usual layout
  // (a newcomer's trial; common practice, no source).
  expect(head + "1\t1\tThe\t100\t200\t150\t240\t1\n1\t2\tdog\t150\t200\t190\t240\t1\n1\t2\tdog\t150\t200\t190\t240\t1\n", 4,
         "left_px");
  expect(head + "1\t1\tThe\t100\t200\t160\t240\t1\n1\t2\tdog\t150\t200\t190\t240\t1\n", 3, "left_px");
  // Found by fuzzing: a column named twice made the header's name list
  // shorter than the header, and listing the columns wrote past its end.
  expect("item\tregion\tlabel\tleft_px\ttop_px\tright_px\tbottom_px\tline\tline\n1\t1\tThe\t100\t200\t150\t240\t1\t1\n", 1, "line");
  // A role names one region of an item.
  const std::string roles = "item\tregion\tlabel\trole\tleft_px\ttop_px\tright_px\tbottom_px\tline\n";
  expect(roles + "1\t1\tThe\ttarget\t100\t200\t150\t240\t1\n1\t2\tdog\ttarget\t150\t200\t190\t240\t1\n", 0, "role");
}

// What a boxes file gives the drift methods and the landing positions,
// worked by hand (common practice, no source: a box stands for the words it
// holds, at its centre). Char width 12 px. Region 1: 100-148 on line 1;
// region 2: 148-196; region 3 wraps: 196-256 on line 1, then 100-136 on
// line 2. Word centres on line 1: 124, 172, 226; on line 2: 118. Region 3's
// second box comes after (256 - 196) / 12 = 5 characters of its first.
TEST(MeasureCommand, BoxesFileGivesWordCentresAndWrappedCharacters) {
  TempDir d;
  const std::string path = d.write("boxes.tsv",
                                   "item\tregion\tlabel\tleft_px\ttop_px\tright_px\tbottom_px\tline\n"
                                   "1\t1\tThe\t100\t200\t148\t240\t1\n"
                                   "1\t2\tdog\t148\t200\t196\t240\t1\n"
                                   "1\t3\tran far\t196\t200\t256\t240\t1\n"
                                   "1\t3\tran far\t100\t240\t136\t280\t2\n");
  const RegionCatalogue cat = read_region_boxes(path, 12, {});
  const RegionLayout* L = cat.find("1", {});
  ASSERT_NE(L, nullptr);
  ASSERT_EQ(L->word_centre_x_px.size(), 2u);
  EXPECT_EQ(L->word_centre_x_px[0], (std::vector<double>{124, 172, 226}));
  EXPECT_EQ(L->word_centre_x_px[1], (std::vector<double>{118}));
  ASSERT_EQ(L->regions[2].boxes.size(), 2u);
  EXPECT_DOUBLE_EQ(L->regions[2].boxes[1].chars_before, 5.0);
  EXPECT_DOUBLE_EQ(L->lines[1].top_px, 240);
}

// Items-file roles must name regions the item has: "9=target" on a
// seven-region item would make the target disappear from every table.
TEST(MeasureCommand, ARoleOnARegionTheItemLacksIsAnError) {
  TempDir d;
  TextLayoutSpec layout;
  const auto path = d.write("items.tsv", "item\ttext\troles\n1\tThe / quick / fox\t2=target\n2\tThe / lazy / dog\t9=target\n");
  try {
    read_items_file(path, layout, {});
    FAIL() << "accepted a role on region 9 of a three-region item";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().line, 3u);
    EXPECT_EQ(e.where().field, "roles");
    EXPECT_NE(std::string(e.what()).find("has 3 regions"), std::string::npos) << e.what();
  }
  // One text per item and design cell, one role per region, one region per
  // role: a second row or role would silently replace the first (a
  // newcomer's trial; common practice, no source).
  auto error_line = [&](const std::string& text) -> std::string {
    try {
      read_items_file(d.write("items.tsv", text), layout, {});
    } catch (const InputError& e) {
      return std::to_string(e.where().line) + " " + e.where().field + ": " + e.what();
    }
    return "no error";
  };
  EXPECT_NE(error_line("item\ttext\n1\tThe / fox\n2\tA / dog\n1\tThe / cat\n").find("4 item: "), std::string::npos);
  EXPECT_NE(error_line("item\ttext\n1\tThe / fox\n2\tA / dog\n1\tThe / cat\n").find("at line 2"), std::string::npos);
  EXPECT_NE(error_line("item\ttext\troles\n1\tThe / quick / fox\t2=target 3=target\n").find("2 roles: "), std::string::npos);
  EXPECT_NE(error_line("item\ttext\troles\n1\tThe / quick / fox\t2=target 2=spillover\n").find("two roles"), std::string::npos);
  EXPECT_EQ(error_line("item\ttext\troles\n1\tThe / quick / fox\t2=target 3=spillover\n"), "no error");
  // Found by fuzzing: two columns of one name (or two without a name) in the header.
  EXPECT_NE(error_line("item\ttext\ta\ta\tz\n1\tThe / fox\t1\t2\t3\n").find("1 a: "), std::string::npos);
  EXPECT_NE(error_line("item\ttext\t\t\tz\n1\tThe / fox\t1\t2\t3\n").find("named twice"), std::string::npos);
  // "target," is a typo, not a role of its own.
  EXPECT_NE(error_line("item\ttext\troles\n1\tThe / quick / fox\t2=target, 3=spillover\n").find("the role 'target,' of region 2 is not a name"),
            std::string::npos);
}

// Every kept fixation the measures do not credit to a region is counted by
// reason: with attach and off_line = "exclude", fixations between the line
// boxes are on no line (our convention, README "Regions and reading-time measures").
TEST(MeasureCommand, FixationsLeftOffTheRegionsAreCountedByReason) {
  TempDir d;
  const std::string proto = simulated(d, 2);
  std::string text;
  {
    std::ifstream in(proto);
    std::stringstream ss;
    ss << in.rdbuf();
    text = ss.str();
  }
  text.replace(text.find("[regions]"), 9, "[regions]\noff_line = \"exclude\"\nmargin = \"exclude\"");
  text += "\n[alignment]\nmethod = \"attach\"\n";  // attach keeps the off_line rule; the other methods place drifted fixations
  std::ofstream(proto) << text;
  const Protocol p = parse_protocol_file(proto);
  const std::string store = d.file("s.gzm.h5");
  ingest_study(p, store);
  detect_study(p, store);
  clean_study(p, store, d.file("out"));
  run_stage(p, store, Stage::align);
  const auto r = run_stage(p, store, Stage::measure, d.file("out"));
  std::uint64_t on = 0, beside = 0, off = 0, kept = 0;
  for (const auto& [k, c] : r.placement) {
    on += c.on_region;
    beside += c.beside_text;
    off += c.off_lines;
  }
  StudyStoreReader s(store);
  for (const auto& c : cleaned_recordings(s)) {
    for (const auto& f : c.kept) kept += c.trial_kept.at(f.fixation.trial);
  }
  EXPECT_EQ(on + beside + off, kept);  // every kept fixation of a kept trial is counted once
  EXPECT_GT(off, 0u);                  // the simulated drift puts some between the line boxes
  EXPECT_GT(beside, 0u);               // and the start marker left of the text
  TsvTable t(d.file("out/fixation_placement.tsv"));
  EXPECT_EQ(t.rows(), r.placement.size());
}

// A later stage may run from a protocol file in another folder; verify reads
// each stage's relative file names from that stage's own folder.
TEST(MeasureCommand, VerifyResolvesEachStagesFilesFromItsOwnFolder) {
  TempDir d;
  const std::string proto = simulated(d, 2);
  const Protocol p = parse_protocol_file(proto);
  const std::string store = d.file("s.gzm.h5");
  ingest_study(p, store);
  std::string text = p.text;
  const std::string from = "items_file = \"items.tsv\"";
  ASSERT_NE(text.find(from), std::string::npos);
  text.replace(text.find(from), from.size(), "items_file = \"../study/items.tsv\"");
  const std::string later = d.write("analysis/gazemill.toml", text);
  const Protocol q = parse_protocol_file(later);
  detect_study(q, store);
  clean_study(q, store, d.file("analysis/tables"));
  measure_study(q, store, d.file("analysis/tables"));
  std::ostringstream out;
  EXPECT_TRUE(verify_store(store, out)) << out.str();
}
