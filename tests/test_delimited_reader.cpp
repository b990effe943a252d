// Delimited-text reader: values, missing tokens, messages, chunking and every
// class of bad input (each must name file, line and column).

#include <gtest/gtest.h>

#include <cmath>
#include <cstdlib>
#include <fstream>
#include <iterator>
#include <string>

#include "io/delimited_reader.h"
#include "pipeline/input_error.h"
#include "test_support.h"

using namespace gazemill;
using gazemill::test_support::TempDir;

namespace {

DelimitedReadOptions binocular_options() {
  DelimitedReadOptions o;
  o.layout.time_column = "t";
  o.layout.time_unit = TimeUnit::milliseconds;
  o.layout.message_column = "msg";
  o.layout.left = EyeColumnNames{"lx", "ly", "lp"};
  o.layout.right = EyeColumnNames{"rx", "ry", ""};
  o.layout.comment_prefix = "#";
  return o;
}

// Time in "t" (ms), one eye's gaze in "x" and "y": the layout of most small cases here.
DelimitedReadOptions gaze_options() {
  DelimitedReadOptions o;
  o.layout.time_column = "t";
  o.layout.left = EyeColumnNames{"x", "y", ""};
  return o;
}

const char* kGood =
    "# exported by a tracker\n"
    "t\tlx\tly\tlp\trx\try\tmsg\n"
    "10.0\t\t\t\t\t\tSTART 1\n"
    "10.0\t100.5\t200.25\t900\t101\t201\t\n"
    "11.0\t101\t201\t901\tNaN\tNaN\t\n"
    "12.5\t.\t.\t.\t103\t203\tMARK\n"
    "13.5\t103\t203\t903\t104\t204\t\n";

// Expects read_delimited to throw InputError at `line` naming `field`.
void expect_error(const std::string& path, const DelimitedReadOptions& o, std::size_t line, const std::string& field,
                  const std::string& text_part) {
  NullSink sink;
  try {
    read_delimited(path, o, sink);
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().file, path);
    EXPECT_EQ(e.where().line, line) << e.what();
    EXPECT_EQ(e.where().field, field) << e.what();
    EXPECT_NE(std::string(e.what()).find(text_part), std::string::npos) << e.what();
  }
}

}  // namespace

TEST(DelimitedReader, ReadsValuesMissingTokensAndMessages) {
  TempDir dir;
  const auto path = dir.write("a.tsv", kGood);
  CollectingSink sink;
  const auto r = read_delimited(path, binocular_options(), sink);
  const SampleColumns& s = sink.samples;
  ASSERT_EQ(r.samples, 4u);
  EXPECT_EQ(r.rows, 5u);
  EXPECT_EQ(s.time_us, (std::vector<Microseconds>{10000, 11000, 12500, 13500}));
  EXPECT_FLOAT_EQ(s.left.x_px[0], 100.5f);
  EXPECT_FLOAT_EQ(s.left.y_px[0], 200.25f);
  EXPECT_FLOAT_EQ(s.left.pupil[1], 901.f);
  EXPECT_TRUE(std::isnan(s.left.x_px[2]));
  EXPECT_EQ(s.left.valid, (std::vector<std::uint8_t>{1, 1, 0, 1}));
  EXPECT_EQ(s.right.valid, (std::vector<std::uint8_t>{1, 0, 1, 1}));
  EXPECT_TRUE(std::isnan(s.right.pupil[0]));  // no pupil column for the right eye
  EXPECT_EQ(r.missing_left, 1u);
  EXPECT_EQ(r.missing_right, 1u);
  ASSERT_EQ(r.messages.size(), 2u);
  EXPECT_EQ(r.messages[0].text, "START 1");
  EXPECT_EQ(r.message_lines[0], 3u);
  EXPECT_EQ(r.messages[1].text, "MARK");  // a message on a sample row keeps the sample
  EXPECT_EQ(r.messages[1].time_us, 12500);
  EXPECT_EQ(r.first_time_us, 10000);
  EXPECT_EQ(r.last_time_us, 13500);
  EXPECT_EQ(r.median_interval_us, 1000.0);
}

TEST(DelimitedReader, GzipCsvCrlfAndTimeUnits) {
  TempDir dir;
  const auto path = dir.write_gz("a.csv.gz", "time,x,y\r\n1.000001,5,6\r\n1.000002,7,8\r\n");
  DelimitedReadOptions o;
  o.layout.delimiter = ',';
  o.layout.time_column = "time";
  o.layout.time_unit = TimeUnit::seconds;
  o.layout.left = EyeColumnNames{"x", "y", ""};
  CollectingSink sink;
  const auto r = read_delimited(path, o, sink);
  EXPECT_EQ(r.samples, 2u);
  EXPECT_EQ(sink.samples.time_us, (std::vector<Microseconds>{1000001, 1000002}));
  EXPECT_FLOAT_EQ(sink.samples.left.y_px[1], 8.f);
}

TEST(DelimitedReader, ZeroGazeAndCustomMissingTokens) {
  TempDir dir;
  const auto path = dir.write("a.tsv", "t\tx\ty\n0\t0\t0\n1\t-1\t-1\n2\t3\t4\n");
  DelimitedReadOptions o = gaze_options();
  o.layout.zero_gaze_is_missing = true;
  o.layout.missing_values = {"", "-1"};
  CollectingSink sink;
  const auto r = read_delimited(path, o, sink);
  EXPECT_EQ(r.missing_left, 2u);
  EXPECT_EQ(sink.samples.left.valid, (std::vector<std::uint8_t>{0, 0, 1}));
}

TEST(DelimitedReader, ChunksAndBlockBoundariesDoNotChangeTheResult) {
  // More than one 1 MiB read block, with chunk sizes that do not divide the rows.
  TempDir dir;
  std::string text = "t\tx\ty\n";
  for (int i = 0; i < 120000; ++i) {
    text += std::to_string(i) + "\t" + std::to_string(i % 977) + ".25\t" + std::to_string(i % 13) + "\n";
  }
  const auto path = dir.write("big.tsv", text);
  DelimitedReadOptions o = gaze_options();
  o.chunk_rows = 7777;
  CollectingSink sink;
  const auto r = read_delimited(path, o, sink);
  ASSERT_EQ(r.samples, 120000u);
  for (int i : {0, 7776, 7777, 65535, 119999}) {
    EXPECT_EQ(sink.samples.time_us[i], static_cast<Microseconds>(i) * 1000);
    EXPECT_FLOAT_EQ(sink.samples.left.x_px[i], static_cast<float>(i % 977) + 0.25f);
    EXPECT_FLOAT_EQ(sink.samples.left.y_px[i], static_cast<float>(i % 13));
  }
}

TEST(DelimitedReaderErrors, NonNumericField) {
  TempDir dir;
  const auto path = dir.write("a.tsv", "t\tx\ty\n1\t2\t3\n2\t4x\t5\n");
  DelimitedReadOptions o = gaze_options();
  expect_error(path, o, 3, "x", "expected a number, found '4x'");
}

// Exports written under a European locale have decimal commas; the error
// says so (common practice, no source).
TEST(DelimitedReaderErrors, DecimalCommaIsNamed) {
  TempDir dir;
  DelimitedReadOptions o = gaze_options();
  o.layout.delimiter = ';';
  expect_error(dir.write("comma.csv", "t;x;y\n1;512,25;300\n"), o, 2, "x", "a decimal comma?");
}

// Two columns of the same name: reading the first would be a guess.
TEST(DelimitedReaderErrors, ColumnNamedTwice) {
  TempDir dir;
  DelimitedReadOptions o = gaze_options();
  expect_error(dir.write("twice.tsv", "t\tx\ty\tx\n1\t2\t3\t4\n"), o, 1, "x", "appears more than once");
}

// "Unicode text" exports of some Windows tools are UTF-16 (common practice,
// no source).
TEST(DelimitedReaderErrors, Utf16TextIsNamed) {
  TempDir dir;
  DelimitedReadOptions o = gaze_options();
  std::string utf16 = "\xFF\xFE";
  for (const char c : std::string("t\tx\ty\n1\t2\t3\n")) utf16 += std::string{c, '\0'};
  expect_error(dir.write("utf16.tsv", utf16), o, 1, "", "UTF-16");
}

TEST(DelimitedReaderErrors, WrongFieldCount) {
  TempDir dir;
  const auto path = dir.write("a.tsv", "t\tx\ty\n1\t2\t3\n2\t4\n");
  DelimitedReadOptions o = gaze_options();
  expect_error(path, o, 3, "", "expected 3 tab-separated fields as in the header, found 2");
}

TEST(DelimitedReaderErrors, MissingRequiredColumn) {
  TempDir dir;
  const auto path = dir.write("a.tsv", "t\tgx\ty\n1\t2\t3\n");
  DelimitedReadOptions o = gaze_options();
  expect_error(path, o, 1, "x", "input.table.left.x_column is not in the header; the file has: t, gx, y");
}

TEST(DelimitedReaderErrors, DecreasingTimestamps) {
  TempDir dir;
  const auto path = dir.write("a.tsv", "t\tx\ty\n1\t2\t3\n3\t2\t3\n2\t2\t3\n");
  DelimitedReadOptions o = gaze_options();
  expect_error(path, o, 4, "t", "timestamps must not decrease");
}

TEST(DelimitedReaderErrors, DuplicateTimestampsFailOrAreCountedWhenRepaired) {
  TempDir dir;
  const auto path = dir.write("a.tsv", "t\tx\ty\n1\t2\t3\n1\t9\t9\n2\t4\t5\n2\t9\t9\n");
  DelimitedReadOptions o = gaze_options();
  expect_error(path, o, 3, "t", "duplicate timestamp 1");

  o.duplicate_timestamps = DuplicateTimestampPolicy::keep_first;
  CollectingSink sink;
  const auto r = read_delimited(path, o, sink);
  EXPECT_EQ(r.samples, 2u);
  EXPECT_EQ(r.repairs.at("duplicate_timestamp_dropped"), 2u);
  EXPECT_FLOAT_EQ(sink.samples.left.x_px[1], 4.f);
}

TEST(DelimitedReaderErrors, EmptyFileAndHeaderOnly) {
  TempDir dir;
  DelimitedReadOptions o = gaze_options();
  o.layout.comment_prefix = "#";
  expect_error(dir.write("empty.tsv", ""), o, 0, "", "the file is empty");
  expect_error(dir.write("comments.tsv", "# nothing\n\n"), o, 0, "", "the file is empty");
  expect_error(dir.write("header.tsv", "t\tx\ty\n"), o, 1, "", "no sample rows");
}

TEST(DelimitedReaderErrors, MissingTimestamp) {
  TempDir dir;
  const auto path = dir.write("a.tsv", "t\tx\ty\n1\t2\t3\n\t2\t3\n");
  DelimitedReadOptions o = gaze_options();
  expect_error(path, o, 3, "t", "expected a timestamp");
}

TEST(DelimitedReaderErrors, CorruptGzip) {
  TempDir dir;
  std::string bytes = "\x1f\x8b\x08\x00\x00\x00\x00\x00\x00\x03garbage-that-is-not-deflate";
  const auto path = dir.write("bad.tsv.gz", bytes);
  DelimitedReadOptions o = gaze_options();
  NullSink sink;
  EXPECT_THROW(read_delimited(path, o, sink), InputError);
}

// Found by fuzzing: a number with more than 15 digits in a row of the quick
// path was converted with a table index past its end before the row went to
// the careful path. Its value is that of strtod narrowed to float (C library).
TEST(DelimitedReader, LongDecimalsReadAsStrtodNarrowed) {
  TempDir dir;
  const std::string longest = "01.9999999999999999999";
  const auto path = dir.write("long.tsv", "t\tx\ty\n1\t1.5\t2\n2\t" + longest + "\t3\n");
  DelimitedReadOptions o = gaze_options();
  CollectingSink sink;
  read_delimited(path, o, sink);
  ASSERT_EQ(sink.samples.size(), 2u);
  EXPECT_EQ(sink.samples.left.x_px[1], static_cast<float>(std::strtod(longest.c_str(), nullptr)));
}

// Seconds with 15 digits overflowed 64-bit microseconds.
TEST(DelimitedReaderErrors, TimestampOutOfRange) {
  TempDir dir;
  DelimitedReadOptions o = gaze_options();
  o.layout.time_unit = TimeUnit::seconds;
  expect_error(dir.write("s.tsv", "t\tx\ty\n1\t2\t3\n999999999999999\t2\t3\n"), o, 3, "t", "within 2^61 microseconds");
  expect_error(dir.write("f.tsv", "t\tx\ty\n1e300\t2\t3\n"), o, 2, "t", "within 2^61 microseconds");
  o.layout.time_unit = TimeUnit::milliseconds;
  expect_error(dir.write("m.tsv", "t\tx\ty\n999999999999999999\t2\t3\n"), o, 2, "t", "within 2^61 microseconds");
}

// zlib hands back what it has when a gzip file ends mid-stream and tells of it
// only through gzerror: a file cut by an interrupted copy read as a shorter
// one, or failed on a later row with a misleading message. Cut anywhere,
// including inside the 8-byte trailer, it must say so (zlib manual, gzread).
TEST(DelimitedReaderErrors, TruncatedGzip) {
  TempDir dir;
  std::string text = "t\tx\ty\n";
  for (int i = 1; i <= 20000; ++i) text += std::to_string(i) + "\t" + std::to_string(i % 977) + ".5\t3\n";
  const auto whole_path = dir.write_gz("whole.tsv.gz", text);
  std::ifstream in(whole_path, std::ios::binary);
  const std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  DelimitedReadOptions o = gaze_options();
  CollectingSink whole;
  EXPECT_EQ(read_delimited(whole_path, o, whole).samples, 20000u);
  for (const std::size_t cut : {bytes.size() / 2, bytes.size() - 9, bytes.size() - 4, bytes.size() - 1}) {
    const auto path = dir.write("cut" + std::to_string(cut) + ".tsv.gz", bytes.substr(0, cut));
    NullSink sink;
    try {
      read_delimited(path, o, sink);
      FAIL() << "a gzip file cut at " << cut << " of " << bytes.size() << " bytes was read without error";
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().file, path);
      EXPECT_NE(std::string(e.what()).find("truncated"), std::string::npos) << e.what();
    }
  }
}

// gzip (RFC 1952, section 2.2): a file may hold several members one after
// another, read as the concatenation of their texts; bytes after the last
// member that are no gzip member are not data: counted and reported as a
// repair, never read silently.
TEST(DelimitedReader, GzipMembersConcatenateAndTrailingBytesAreCounted) {
  TempDir dir;
  const std::string head = "t\tx\ty\n1\t1.5\t2\n", tail = "2\t2.5\t3\n3\t3.5\t4\n";
  std::string bytes;
  for (const auto& part : {head, tail}) {
    std::ifstream in(dir.write_gz("part.gz", part), std::ios::binary);
    bytes += std::string((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  }
  DelimitedReadOptions o = gaze_options();
  CollectingSink two;
  const auto r = read_delimited(dir.write("two.tsv.gz", bytes), o, two);
  ASSERT_EQ(two.samples.size(), 3u);
  EXPECT_EQ(two.samples.left.x_px[2], 3.5f);
  EXPECT_EQ(r.repairs.count("gzip_trailing_bytes_ignored"), 0u);
  CollectingSink padded;
  const auto p = read_delimited(dir.write("padded.tsv.gz", bytes + std::string(100, '\0')), o, padded);
  EXPECT_EQ(padded.samples.size(), 3u);
  ASSERT_EQ(p.repairs.count("gzip_trailing_bytes_ignored"), 1u);
  EXPECT_EQ(p.repairs.at("gzip_trailing_bytes_ignored"), 100u);
}

// The store keeps messages as C strings, so a NUL byte cut a message short
// without a word ("S 1 a\0b" was stored as "S 1 a"). No text export writes
// NUL bytes; an interrupted write can leave blocks of zeros (common practice,
// no source). Wherever they are, the error says the file is damaged.
TEST(DelimitedReaderErrors, NulBytesMeanADamagedFile) {
  TempDir dir;
  const std::string head = "t\tx\ty\tmsg\n1\t1\t2\t\n";
  auto expect_damaged = [&](const std::string& name, const std::string& rest, std::size_t line, const std::string& field) {
    for (const bool mapped : {true, false}) {
      DelimitedReadOptions o = gaze_options();
      o.layout.message_column = "msg";
      o.map_plain_files = mapped;
      expect_error(dir.write(name, head + rest), o, line, field, "NUL bytes");
    }
  };
  expect_damaged("message.tsv", std::string("2\t\t\tS 1 a\0b\n", 12), 3, "msg");
  expect_damaged("number.tsv", std::string("2\t1\0\t2\t\n", 8), 3, "x");
  expect_damaged("zeros.tsv", "2\t1\t2\t\n" + std::string(300, '\0'), 4, "");
}

// Some Windows tools begin UTF-8 text with a byte-order mark; it made the
// first column's name differ from the protocol's, with an error listing a name
// that looked the same (common practice, no source).
TEST(DelimitedReader, ByteOrderMarkIsNoPartOfTheHeader) {
  TempDir dir;
  for (const bool header : {true, false}) {
    DelimitedReadOptions o = gaze_options();
    if (!header) o.column_names = {"t", "x", "y"};
    const std::string rows = "1\t2.5\t3\n2\t2.5\t3\n";
    CollectingSink sink;
    const auto r = read_delimited(dir.write("bom.tsv", "\xEF\xBB\xBF" + (header ? "t\tx\ty\n" + rows : rows)), o, sink);
    EXPECT_EQ(r.samples, 2u);
    EXPECT_EQ(sink.samples.time_us.front(), 1000);
  }
}

// Issue 20: nan and inf in gaze were read as missing without a count. They
// are now a named repair, on every path of the reader (common practice, no source).
TEST(DelimitedReader, NonFiniteGazeIsMissingAndCounted) {
  TempDir dir;
  std::string text = "t\tx\ty\tmsg\n0\tNaN\tNaN\tSTART\n";  // a message row, not a sample, as before
  for (int i = 1; i <= 40; ++i) {
    const char* x = i == 5 ? "nan" : i == 6 ? "inf" : i == 7 ? "-inf" : "100.5";
    text += std::to_string(i) + "\t" + x + "\t" + (i == 8 ? "NaN" : "200") + "\t\n";
  }
  const auto path = dir.write("a.tsv", text);
  for (bool quick : {true, false}) {
    DelimitedReadOptions o = gaze_options();
    o.layout.message_column = "msg";
    o.common_row_path = quick;
    CollectingSink sink;
    const auto r = read_delimited(path, o, sink);
    EXPECT_EQ(r.samples, 40u);
    EXPECT_EQ(r.messages.size(), 1u);
    EXPECT_EQ(r.missing_left, 4u);
    ASSERT_EQ(r.repairs.count("non_finite_gaze_read_as_missing"), 1u);
    EXPECT_EQ(r.repairs.at("non_finite_gaze_read_as_missing"), 4u);
    EXPECT_EQ(sink.samples.left.valid[5], 0);
    // A token the protocol lists is missing by declaration: no repair.
    o.layout.missing_values = {"", "nan", "NaN", "inf", "-inf"};
    EXPECT_EQ(read_delimited(path, o, sink).repairs.count("non_finite_gaze_read_as_missing"), 0u);
  }
}

// Issue 20: a status column's values mark samples invalid (common practice, no source).
TEST(DelimitedReader, StatusColumnMarksSamplesInvalid) {
  TempDir dir;
  const auto path = dir.write("a.tsv", "t\tx\ty\tstate\n0\t1\t2\tok\n1\t1\t2\t 4 \n2\t1\t2\tlost\n3\t1\t2\tok\n");
  DelimitedReadOptions o = gaze_options();
  o.layout.status_column = "state";
  o.layout.invalid_status = {"4", "lost"};
  CollectingSink sink;
  const auto r = read_delimited(path, o, sink);
  EXPECT_EQ(sink.samples.left.valid, (std::vector<std::uint8_t>{1, 0, 0, 1}));
  EXPECT_TRUE(std::isnan(sink.samples.left.x_px[1]));
  EXPECT_EQ(r.missing_left, 2u);
  EXPECT_EQ(r.repairs.at("status_invalid_read_as_missing"), 2u);
  o.layout.status_column = "status";
  expect_error(path, o, 1, "status", "input.table.status_column is not in the header");
  EXPECT_THROW(check_delimited_header(path, o), InputError);
}

// Screen-margin sink: gaze beyond the margin off screen is missing and counted (issue 20).
TEST(ScreenMarginSink, GazeBeyondTheMarginIsMissingAndCounted) {
  CollectingSink inner;
  ScreenMarginSink margin(inner, 1024, 768, 200);
  SampleColumns c;
  c.has_left = true;
  c.time_us = {0, 1, 2, 3, 4};
  c.left.x_px = {1560, 1224, -201, 500, 1225};
  c.left.y_px = {300, 300, 300, 968.5f, 300};
  c.left.pupil = {1, 1, 1, 1, 1};
  c.left.valid = {1, 1, 1, 1, 1};
  margin.append(c);
  EXPECT_EQ(inner.samples.left.valid, (std::vector<std::uint8_t>{0, 1, 0, 0, 0}));
  EXPECT_EQ(margin.offscreen_left, 4u);
  EXPECT_FLOAT_EQ(inner.samples.left.pupil[0], 1.f);
}

// Gaze at exactly (0, 0) px is counted (for a warning; a newcomer's trial:
// some trackers write lost tracking so, common practice, no source) and
// passed on unchanged. By hand: only the first sample is valid and at (0, 0).
TEST(ZeroGazeCountingSink, CountsValidGazeAtExactlyTheOrigin) {
  CollectingSink inner;
  ZeroGazeCountingSink zeros(inner);
  SampleColumns c;
  c.has_left = true;
  c.time_us = {0, 1, 2, 3, 4};
  c.left.x_px = {0, 0, 0, 3, 0.5f};
  c.left.y_px = {0, 0, 5, 0, 0};
  c.left.pupil = {1, 1, 1, 1, 1};
  c.left.valid = {1, 0, 1, 1, 1};
  zeros.append(c);
  EXPECT_EQ(zeros.zero_gaze, 1u);
  EXPECT_EQ(zeros.samples, 5u);
  EXPECT_EQ(inner.samples.left.x_px, c.left.x_px);
  EXPECT_EQ(inner.samples.left.valid, c.left.valid);
}
