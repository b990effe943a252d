// Write-then-read of every record type in the store, atomic creation, and
// refusal of files that are not stores.

#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>

#include "io/hdf5_util.h"
#include "io/store_compare.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"
#include "test_support.h"

using namespace gazemill;
using gazemill::test_support::TempDir;

namespace {

Recording sample_recording(std::size_t n) {
  Recording r;
  r.id = "p03_2";
  r.participant = "p03";
  r.session = "2";
  r.source_file = "raw/p03_2.tsv";
  r.sample_rate_hz = 500;
  r.screen = {1920, 1080, 531.0, 299.0, 700.0};
  r.samples.has_left = true;
  r.samples.has_right = true;
  for (std::size_t i = 0; i < n; ++i) {
    r.samples.time_us.push_back(static_cast<Microseconds>(1000000 + 2000 * i));
    for (Eye e : {Eye::left, Eye::right}) {
      EyeSamples& s = r.samples.eye(e);
      const bool ok = i % 97 != 5;
      s.x_px.push_back(ok ? 100.0f + 0.5f * static_cast<float>(i % 1000) : NAN);
      s.y_px.push_back(ok ? 300.0f + (e == Eye::left ? 1.0f : 2.0f) : NAN);
      s.pupil.push_back(ok ? 1000.0f : NAN);
      s.valid.push_back(ok);
    }
  }
  r.messages = {{1000000, "BEGIN 1"}, {1500000, "SHOW"}, {2000000, "FINISH 1"}};
  Trial t;
  t.id = "1";
  t.start_us = 1000000;
  t.end_us = 2000000;
  t.variables["item"] = "12";
  t.variables["condition"] = "rare";
  t.variables["correct"] = "1";
  t.markers["display_onset"] = 1500000;
  Trial u = t;
  u.id = "2";
  u.variables.clear();
  u.markers.clear();
  r.trials = {t, u};
  return r;
}

void write_store(const std::string& path, const Recording& r) {
  StoreWriteOptions opt;
  opt.chunk_rows = 1000;  // several chunks and a partial last one
  StudyStoreWriter w(path, opt);
  CompressedSamples samples(true, true, opt.chunk_rows, opt.deflate_level, 0);
  auto* sink = &samples;
  // Push in uneven pieces, as a reader would.
  SampleColumns part;
  part.has_left = part.has_right = true;
  for (std::size_t i = 0; i < r.samples.size(); i += 777) {
    const std::size_t j = std::min(r.samples.size(), i + 777);
    part.clear();
    part.time_us.assign(r.samples.time_us.begin() + i, r.samples.time_us.begin() + j);
    for (Eye e : {Eye::left, Eye::right}) {
      const EyeSamples& from = r.samples.eye(e);
      part.eye(e).x_px.assign(from.x_px.begin() + i, from.x_px.begin() + j);
      part.eye(e).y_px.assign(from.y_px.begin() + i, from.y_px.begin() + j);
      part.eye(e).pupil.assign(from.pupil.begin() + i, from.pupil.begin() + j);
      part.eye(e).valid.assign(from.valid.begin() + i, from.valid.begin() + j);
    }
    sink->append(part);
  }
  SampleSummary sum;
  sum.sample_count = r.samples.size();
  sum.first_time_us = r.samples.time_us.front();
  sum.last_time_us = r.samples.time_us.back();
  samples.finish();
  w.write_recording(r, sum, samples.columns(), "key");
  Provenance p;
  p.tool_version = "test";
  p.protocol_text = "[input]\n";
  p.inputs = {{"raw/p03_2.tsv", 1234, std::string(64, 'a'), r.id}};
  p.repairs = {{r.id, "duplicate_timestamp_dropped", 3}};
  w.write_provenance(p);
  w.commit();
}

}  // namespace

TEST(StudyStore, RoundTripsEveryRecordType) {
  TempDir dir;
  const std::string path = dir.file("s.gzm.h5");
  const Recording r = sample_recording(4321);
  write_store(path, r);

  StudyStoreReader store(path);
  ASSERT_EQ(store.recording_ids(), std::vector<std::string>{"p03_2"});
  const Recording back = store.read_recording("p03_2", true);
  EXPECT_EQ(back.participant, "p03");
  EXPECT_EQ(back.session, "2");
  EXPECT_EQ(back.sample_rate_hz, 500.0);
  EXPECT_EQ(back.screen.width_px, 1920);
  EXPECT_DOUBLE_EQ(back.screen.viewing_distance_mm, 700.0);
  EXPECT_EQ(back.samples.time_us, r.samples.time_us);
  for (Eye e : {Eye::left, Eye::right}) {
    const EyeSamples& a = r.samples.eye(e);
    const EyeSamples& b = back.samples.eye(e);
    ASSERT_EQ(a.size(), b.size());
    for (std::size_t i = 0; i < a.size(); ++i) {
      if (std::isnan(a.x_px[i])) {
        EXPECT_TRUE(std::isnan(b.x_px[i]));
      } else {
        EXPECT_EQ(a.x_px[i], b.x_px[i]);
      }
    }
    EXPECT_EQ(a.valid, b.valid);
  }
  ASSERT_EQ(back.messages.size(), 3u);
  EXPECT_EQ(back.messages[1].text, "SHOW");
  ASSERT_EQ(back.trials.size(), 2u);
  EXPECT_EQ(back.trials[0].variable("condition"), "rare");
  EXPECT_EQ(back.trials[0].variables.at("correct"), "1");
  EXPECT_EQ(back.trials[0].markers.at("display_onset"), 1500000);
  EXPECT_TRUE(back.trials[1].variables.empty());
  EXPECT_TRUE(back.trials[1].markers.empty());
  const Provenance p = store.provenance();
  ASSERT_EQ(p.inputs.size(), 1u);
  EXPECT_EQ(p.inputs[0].size_bytes, 1234u);
  ASSERT_EQ(p.repairs.size(), 1u);
  EXPECT_EQ(p.repairs[0].count, 3u);
  EXPECT_EQ(store.sample_summary("p03_2").sample_count, 4321u);
  // The chunks read back raw decode to the same samples (raw_budget 0: every slice decodes).
  CompressedSamples again(true, true, store.read_sample_chunks("p03_2"), 0);
  ASSERT_EQ(again.slice(0, again.size()).time_us, r.samples.time_us);
  // Trials are found by time: the samples within [1500th, 2600th sample's time], both ends included.
  EXPECT_EQ(again.range(r.samples.time_us[1500], r.samples.time_us[2600]), std::make_pair(std::size_t{1500}, std::size_t{2601}));
  EXPECT_EQ(again.range(r.samples.time_us[1500] - 1, r.samples.time_us[1500] - 1).first, 1500u);
  const SampleColumns middle = again.slice(1500, 2600);  // across chunk edges
  for (std::size_t i = 0; i < middle.size(); ++i) {
    EXPECT_EQ(middle.right.valid[i], r.samples.right.valid[1500 + i]);
    if (!std::isnan(r.samples.left.y_px[1500 + i])) {
      EXPECT_EQ(middle.left.y_px[i], r.samples.left.y_px[1500 + i]);
    }
  }
}

TEST(StudyStore, NothingIsLeftWithoutCommit) {
  TempDir dir;
  const std::string path = dir.file("s.gzm.h5");
  std::string temp;
  {
    StudyStoreWriter w(path);
    temp = w.temporary_path();
    EXPECT_TRUE(std::filesystem::exists(temp));
  }
  EXPECT_FALSE(std::filesystem::exists(temp));
  EXPECT_FALSE(std::filesystem::exists(path));
  EXPECT_TRUE(std::filesystem::is_empty(dir.path()));
}

TEST(StudyStore, RejectsFilesThatAreNotStores) {
  TempDir dir;
  EXPECT_THROW(StudyStoreReader(dir.file("absent.h5")), InputError);
  EXPECT_THROW(StudyStoreReader(dir.write("text.h5", "hello")), InputError);
}

namespace gazemill {
namespace {

// Strings are written fixed-length where they fit (format 3) and were
// variable-length before (format 2): both read back as the same text, and
// comparing two stores (verify) looks at the text, not the representation.
// The variable-length column is written here with the HDF5 C++ API directly.
TEST(StudyStore, StringColumnsReadAlikeFixedOrVariable) {
  TempDir d;
  const std::vector<std::string> values = {"p01", "", "a longer value with spaces", "ü-umlaut", "p01"};
  for (const char* name : {"fixed.h5", "variable.h5"}) {
    H5::H5File f(d.file(name), H5F_ACC_TRUNC);
    H5::Group root = f.openGroup("/");
    if (std::string(name) == "fixed.h5") {
      h5::write_strings(root, "column", values);
    } else {
      H5::StrType t(H5::PredType::C_S1, H5T_VARIABLE);
      t.setCset(H5T_CSET_UTF8);
      const hsize_t n = values.size();
      H5::DataSet ds = root.createDataSet("column", t, H5::DataSpace(1, &n));
      std::vector<const char*> ptrs;
      for (const auto& v : values) ptrs.push_back(v.c_str());
      ds.write(ptrs.data(), t);
    }
  }
  {
    H5::H5File fixed(d.file("fixed.h5"), H5F_ACC_RDONLY), variable(d.file("variable.h5"), H5F_ACC_RDONLY);
    EXPECT_FALSE(fixed.openDataSet("column").getStrType().isVariableStr());
    EXPECT_EQ(h5::read_strings(fixed.openGroup("/"), "column"), values);
    EXPECT_EQ(h5::read_strings(variable.openGroup("/"), "column"), values);
  }
  EXPECT_TRUE(compare_store_datasets(d.file("fixed.h5"), d.file("variable.h5")).empty());
}

}  // namespace
}  // namespace gazemill
