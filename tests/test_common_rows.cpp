// The delimited reader's quick path for common rows against two references:
// decimal_to_float against the C library's correctly rounded strtof/strtod
// (an outside reference), and the whole reader with the quick path on against
// the careful path alone, on random files that mix every kind of row either
// path must handle (invented data, generated here).

#include <gtest/gtest.h>
#include <unistd.h>

#include <filesystem>
#include <cstdlib>
#include <random>
#include <string>

#include "io/decimal_to_float.h"
#include "io/delimited_reader.h"
#include "pipeline/input_error.h"
#include "reading_comparison.h"
#include "test_support.h"

using namespace gazemill;
using namespace gazemill::test_support;

namespace {

std::string decimal_text(std::uint64_t mantissa, int decimals) {
  std::string digits = std::to_string(mantissa);
  if (decimals == 0) return digits;
  if (static_cast<int>(digits.size()) <= decimals) digits.insert(0, decimals + 1 - digits.size(), '0');
  digits.insert(digits.size() - decimals, ".");
  return digits;
}


}  // namespace

// Short numbers take the multiplication; the comment in decimal_to_float.h
// argues it always lands on the float nearest the decimal, which is what the
// C library's strtof returns (glibc rounds correctly). Every mantissa below
// 200 000 and a million random ones below 10^7, at every decimal count 0-7.
TEST(DecimalToFloat, ShortNumbersEqualStrtof) {
  std::mt19937_64 rng(5);
  std::uniform_int_distribution<std::uint64_t> any_short(0, 9999999);
  std::size_t checked = 0;
  for (int d = 0; d <= 7; ++d) {
    auto check = [&](std::uint64_t m) {
      const std::string text = decimal_text(m, d);
      const float expected = std::strtof(text.c_str(), nullptr);
      ASSERT_TRUE(same_float(decimal_to_float(m, d, false), expected)) << text;
      ASSERT_TRUE(same_float(decimal_to_float(m, d, true), -expected)) << "-" << text;
      ++checked;
    };
    for (std::uint64_t m = 0; m < 200000; ++m) check(m);
    for (int i = 0; i < 125000; ++i) check(any_short(rng));
  }
  EXPECT_EQ(checked, 8u * 325000u);
}

// Longer numbers are divided in double and narrowed: the value of strtod
// narrowed to float, as numpy and pandas read a column and then cast it.
TEST(DecimalToFloat, LongNumbersEqualStrtodNarrowed) {
  std::mt19937_64 rng(6);
  std::uniform_int_distribution<std::uint64_t> any_long(10000000, 999999999999999);
  std::uniform_int_distribution<int> decimals(0, 15);
  for (int i = 0; i < 500000; ++i) {
    const std::uint64_t m = any_long(rng);
    const int d = decimals(rng);
    const std::string text = decimal_text(m, d);
    ASSERT_TRUE(same_float(decimal_to_float(m, d, false), static_cast<float>(std::strtod(text.c_str(), nullptr))))
        << text;
  }
}

namespace {

struct Generated {
  std::string text;
  DelimitedReadOptions options;
};

// A random export: binocular or not, an unmapped column, messages, missing
// tokens, numeric tokens, zeros, spaces, CRLF, comments, exponents, long
// numbers, decimal and repeated timestamps.
Generated random_export(std::mt19937_64& rng, std::size_t rows) {
  Generated g;
  auto chance = [&](double p) { return std::uniform_real_distribution<double>(0, 1)(rng) < p; };
  auto pick = [&](int n) { return std::uniform_int_distribution<int>(0, n - 1)(rng); };
  DelimitedReadOptions& o = g.options;
  o.layout.delimiter = chance(0.5) ? '\t' : ',';
  o.layout.time_column = "t";
  o.layout.time_unit = chance(0.5) ? TimeUnit::milliseconds : TimeUnit::microseconds;
  o.layout.message_column = "msg";
  o.layout.comment_prefix = "#";
  o.layout.left = EyeColumnNames{"lx", "ly", "lp"};
  const bool binocular = chance(0.5);
  if (binocular) o.layout.right = EyeColumnNames{"rx", "ry", ""};
  else if (chance(0.5)) std::swap(o.layout.left, o.layout.right);  // the one eye may be the right one
  if (chance(0.5)) o.layout.missing_values.push_back("-1");
  o.layout.zero_gaze_is_missing = chance(0.5);
  o.duplicate_timestamps = DuplicateTimestampPolicy::keep_first;
  o.chunk_rows = 1 + pick(50);  // chunks end inside runs of common rows
  const std::string sep(1, o.layout.delimiter);
  std::vector<std::string> header = {"t", "lx", "ly", "lp", "extra"};
  if (binocular) header.insert(header.end(), {"rx", "ry"});
  header.push_back("msg");
  if (chance(0.2)) {
    o.column_names = header;  // a headerless file, as BIDS physio files are
  } else {
    for (std::size_t c = 0; c < header.size(); ++c) g.text += (c ? sep : "") + header[c];
    g.text += chance(0.3) ? "\r\n" : "\n";
  }

  auto value = [&]() -> std::string {
    switch (pick(20)) {
      case 0: return "";
      case 1: return ".";
      case 2: return "NaN";
      case 3: return "-1";
      case 4: return "0";
      case 5: return " 12.5";
      case 6: return "1.5e2";
      case 7: return decimal_text(std::uniform_int_distribution<std::uint64_t>(0, 999999999999)(rng), pick(9));
      case 8: return "-" + decimal_text(pick(100000), pick(4));
      default: return decimal_text(pick(2000000), pick(3));
    }
  };
  std::uint64_t t = 1000 + pick(1000);
  for (std::size_t r = 0; r < rows; ++r) {
    if (chance(0.01)) {
      g.text += "# a comment\n";
      continue;
    }
    const int step = pick(40);
    if (step > 0) t += step < 3 ? 2 : 1;  // mostly regular, sometimes a gap, sometimes a repeat
    std::string time = std::to_string(t);
    if (chance(0.02)) time += ".5";  // a decimal timestamp
    std::vector<std::string> f = {time, value(), value(), value(), chance(0.5) ? "x" : ""};
    if (binocular) f.insert(f.end(), {value(), value()});
    f.push_back(chance(0.03) ? "MARK " + std::to_string(r) : "");
    for (std::size_t c = 0; c < f.size(); ++c) g.text += (c ? sep : "") + f[c];
    g.text += chance(0.2) ? "\r\n" : "\n";
  }
  return g;
}

// Both readings agree in everything first_difference compares, and one that
// did not fail read samples.
void expect_same_reading(const Reading& a, const Reading& b, int round) {
  EXPECT_EQ(first_difference(a, b), "") << "round " << round;
  if (b.error.empty()) {
    EXPECT_GT(b.sink.samples.size(), 0u) << "round " << round;
  }
}

}  // namespace

TEST(CommonRows, SameResultAsTheCarefulPath) {
  TempDir dir;
  std::mt19937_64 rng(11);
  for (int round = 0; round < 40; ++round) {
    // Most files are small; a few cross the reader's 1 MiB blocks and 4 MiB windows.
    const std::size_t rows = round % 10 == 9 ? 60000 : 300 + round * 37;
    const Generated g = random_export(rng, rows);
    const std::string path = dir.write("export" + std::to_string(round) + ".csv", g.text);
    DelimitedReadOptions careful = g.options;
    careful.common_row_path = false;
    careful.map_plain_files = round % 2 == 0;
    Reading quick, slow;
    read_into(quick, path, g.options);
    read_into(slow, path, careful);
    expect_same_reading(quick, slow, round);
  }
}

// Mapped windows against read() into a buffer, on files that end at a page
// edge (no room after the last byte for the reader's sentinel), end without a
// newline, or hold a line longer than a window; windows of one page, so
// that rows cross window edges often.
TEST(MappedWindows, SameResultAsReading) {
  TempDir dir;
  std::mt19937_64 rng(12);
  const std::size_t page = static_cast<std::size_t>(::sysconf(_SC_PAGESIZE));
  int read_whole = 0;
  for (int round = 0; round < 24; ++round) {
    Generated g = random_export(rng, 200 + 53 * round);
    std::string& text = g.text;
    if (round % 3 == 1) {  // a comment longer than two windows, mid-file
      const std::size_t cut = text.find('\n', text.size() / 2) + 1;
      text.insert(cut, "#" + std::string(2 * page + 100, 'c') + "\n");
    }
    if (round % 4 == 0) {  // pad with a comment so that the file ends exactly at a page edge
      const std::size_t room = page - (text.size() + 2) % page;
      text += "#" + std::string(room, 'p') + "\n";
      ASSERT_EQ(text.size() % page, 0u);
    } else if (round % 4 == 1 && text.back() == '\n') {
      text.pop_back();  // the last row has no newline
      if (text.back() == '\r') text.pop_back();
    }
    const std::string path = dir.write("m" + std::to_string(round) + ".tsv", text);
    DelimitedReadOptions mapped = g.options, read = g.options;
    mapped.mapped_window_bytes = round % 2 ? 1 : 3 * page;
    read.map_plain_files = false;
    Reading a, b;
    read_into(a, path, mapped);
    read_into(b, path, read);
    expect_same_reading(a, b, round);
    read_whole += b.error.empty();
  }
  // Some files end in an error (a decimal time followed by a repeat of the
  // whole one decreases), which both ways must name alike; 17 of 24 read whole.
  EXPECT_GE(read_whole, 12) << "most files must read without error, or the comparison says little";
}

// An error in a row after a run of common rows names the same line either way.
TEST(CommonRows, ErrorsNameTheSameLine) {
  TempDir dir;
  std::string text = "t\tx\ty\n";
  for (int i = 0; i < 500; ++i) text += std::to_string(100 + i) + "\t" + std::to_string(i) + ".5\t7\n";
  text += "700\tabc\t7\n";
  const std::string path = dir.write("bad.tsv", text);
  DelimitedReadOptions o;
  o.layout.time_column = "t";
  o.layout.right = EyeColumnNames{"x", "y", ""};
  for (const bool quick : {true, false}) {
    o.common_row_path = quick;
    NullSink sink;
    try {
      read_delimited(path, o, sink);
      FAIL() << "no error";
    } catch (const InputError& e) {
      EXPECT_EQ(e.where().line, 502u);
      EXPECT_EQ(e.where().field, "x");
    }
  }
}

// A headerless file (as BIDS physio files are) of nothing but common rows.
TEST(CommonRows, HeaderlessFileOfCommonRowsOnly) {
  TempDir dir;
  const std::string path = dir.write("physio.tsv", "1000\t1.5\t2\n1002\t1.25\t3\n1004\t.\t4\n");
  DelimitedReadOptions o;
  o.layout.time_column = "t";
  o.layout.time_unit = TimeUnit::microseconds;
  o.layout.right = EyeColumnNames{"x", "y", ""};
  o.column_names = {"t", "x", "y"};
  for (const bool quick : {true, false}) {
    o.common_row_path = quick;
    CollectingSink sink;
    const DelimitedReadResult r = read_delimited(path, o, sink);
    EXPECT_EQ(r.samples, 3u);
    EXPECT_EQ(sink.samples.time_us, (std::vector<Microseconds>{1000, 1002, 1004}));
    EXPECT_EQ(sink.samples.right.x_px[1], 1.25f);
    EXPECT_EQ(r.missing_right, 1u);
  }
}

// Found by fuzzing: a header-less file of two byte-order marks and no
// newline. Reading by blocks skipped the first and then the second (as if
// each began the file) and called the file empty; mapped, only the first was
// skipped. Only the file's first three bytes can be its mark (the Unicode
// standard, from memory): the second is text, a row of one field.
TEST(MappedWindows, OnlyTheFirstByteOrderMarkIsSkipped) {
  TempDir dir;
  DelimitedReadOptions o;
  o.layout.time_column = "t";
  o.layout.right = EyeColumnNames{"x", "y", ""};
  o.column_names = {"t", "x", "y"};
  const std::pair<std::string, std::string> cases[] = {{"\xEF\xBB\xBF\xEF\xBB\xBF", "expected 3 tab-separated fields"},
                                                        {"\xEF\xBB\xBF\xEF\xBB\xBF\n", "expected 3 tab-separated fields"},
                                                        {"\xEF\xBB\xBF\xEF\xBB\xBF" "1\t2\t3\n", "field 't': expected a number"},
                                                        // Found by the next run: a UTF-16 mark must be named on every path too.
                                                        {"\xFE\xFF" "1\t2\t3", "the file is UTF-16 text"},
                                                        {"\xFF\xFE" "1\t2\t3\n", "the file is UTF-16 text"}};
  for (const auto& [text, error] : cases) {
    const std::string path = dir.write("two-marks.tsv", text);
    DelimitedReadOptions mapped = o, read = o;
    read.map_plain_files = false;
    Reading a, b;
    read_into(a, path, mapped);
    read_into(b, path, read);
    expect_same_reading(a, b, 0);
    EXPECT_NE(b.error.find(error), std::string::npos) << b.error;
  }
}

// A file cut short by another program while it is mapped: the next window
// sees the new size and stops with an error naming the file, rather than
// touching pages past the end (which would stop the program with SIGBUS).
TEST(MappedWindows, FileCutShortWhileReadingIsAnError) {
  TempDir dir;
  std::string text = "t\tx\ty\n";
  for (int i = 0; i < 3000; ++i) text += std::to_string(1000 + i) + "\t" + std::to_string(i % 900) + ".5\t7\n";
  const std::string path = dir.write("cut.tsv", text);
  const std::size_t page = static_cast<std::size_t>(::sysconf(_SC_PAGESIZE));
  ASSERT_GT(text.size(), 8 * page);
  // Cuts the file to two pages at the first chunk, while the first window is being read.
  struct CuttingSink : SampleSink {
    std::string path;
    std::uintmax_t keep = 0;
    void append(const SampleColumns&) override {
      if (keep == 0) return;
      std::filesystem::resize_file(path, keep);
      keep = 0;
    }
  } sink;
  sink.path = path;
  sink.keep = 2 * page;
  DelimitedReadOptions o;
  o.layout.time_column = "t";
  o.layout.right = EyeColumnNames{"x", "y", ""};
  o.chunk_rows = 10;
  o.mapped_window_bytes = page;
  try {
    read_delimited(path, o, sink);
    FAIL() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("cut.tsv"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("shrank from " + std::to_string(text.size()) + " to " + std::to_string(2 * page) +
                                         " bytes while it was being read"),
              std::string::npos)
        << e.what();
  }
}

