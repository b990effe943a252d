// The reader's eight-rows-at-a-time path (io/row_group_reader.h) against two
// references: each number form it takes against the C library's correctly
// rounded strtof (an outside reference), and whole readings against the
// careful row path on random files whose rows are mostly plain, so that most
// groups are read whole and every kind of row that must break a group turns
// up at every place in one (invented data, generated here).

#include <gtest/gtest.h>

#include <cstdlib>
#include <random>
#include <string>
#include <vector>

#include "io/delimited_reader.h"
#include "io/row_group_reader.h"
#include "reading_comparison.h"
#include "test_support.h"

using namespace gazemill;
using namespace gazemill::test_support;

namespace {

DelimitedReadOptions one_eye_options() {
  DelimitedReadOptions o;
  o.layout.time_column = "t";
  o.layout.right = EyeColumnNames{"x", "y", "p"};
  return o;
}

}  // namespace

// Every form of number a group takes: signs, a dot first or last, eight
// characters, zeros. Each is read in eight rows that make one group, and
// must equal strtof of its text (glibc rounds correctly); -0 keeps its sign.
TEST(RowGroups, NumberFormsEqualStrtof) {
  if (!row_groups_supported()) GTEST_SKIP() << "this processor has no AVX-512; the row path is tested elsewhere";
  TempDir dir;
  const std::vector<std::string> forms = {"0",       "-0",       "7",        "5.",       "-5.",     ".25",
                                          "-.5",     "0.000001", "12345678", "1234567.", "-123456.", "-12345.6",
                                          "9999999", "0.1",      "1919.9",   "00012.50", "-0.0",     "16777217"};
  for (const std::string& f : forms) {
    std::string text = "t\tx\ty\tp\n";
    for (int i = 0; i < 8; ++i) text += std::to_string(1000 + i) + "\t" + f + "\t" + f + "\t" + f + "\n";
    // Rows after the group: it reads only where the data goes on for some bytes.
    for (int i = 8; i < 24; ++i) text += std::to_string(1000 + i) + "\t1\t1\t1\n";
    const std::string path = dir.write("forms.tsv", text);
    CollectingSink sink;
    const DelimitedReadResult r = read_delimited(path, one_eye_options(), sink);
    EXPECT_GE(r.grouped_rows, 8u) << f;
    const float expected = std::strtof(f.c_str(), nullptr);
    for (int i = 0; i < 8; ++i) {
      EXPECT_TRUE(same_float(sink.samples.right.x_px[i], expected)) << f << " read as " << sink.samples.right.x_px[i];
      EXPECT_TRUE(same_float(sink.samples.right.pupil[i], expected)) << f;
    }
  }
}

namespace {

// value / 10^decimals written with exactly `decimals` decimals: 325, 2 -> "3.25".
std::string fixed(long long value, int decimals) {
  const bool negative = value < 0;
  std::string digits = std::to_string(negative ? -value : value);
  if (decimals > 0) {
    if (static_cast<int>(digits.size()) <= decimals) digits.insert(0, decimals + 1 - digits.size(), '0');
    digits.insert(digits.size() - decimals, ".");
  }
  return (negative ? "-" : "") + digits;
}

}  // namespace

// Times a group takes: whole numbers up to 15 digits, and decimals of up to
// 8 characters, signed or not, in every unit; each read as the row path
// reads it.
TEST(RowGroups, TimeFormsReadAsWithout) {
  TempDir dir;
  struct Form {
    long long first, step;
    int decimals;
    TimeUnit unit;
  };
  const std::vector<Form> forms = {{7, 1, 0, TimeUnit::milliseconds},
                                   {123456789012345, 2, 0, TimeUnit::microseconds},
                                   {99999000, 1000, 0, TimeUnit::nanoseconds},
                                   {12345, 1, 3, TimeUnit::seconds},   // 12.345 s
                                   {-325, 25, 2, TimeUnit::milliseconds},  // -3.25 ms, through 0.00
                                   {125, 125, 6, TimeUnit::seconds},  // 0.000125 s
                                   {12345, 10, 1, TimeUnit::microseconds},  // 1234.5 us: halves round away from zero
                                   {-5, 1, 1, TimeUnit::seconds}};  // -0.5 s, through 0.0
  for (const Form& form : forms) {
    std::string text = "t\tx\ty\tp\n";
    for (int i = 0; i < 24; ++i) text += fixed(form.first + form.step * i, form.decimals) + "\t1.5\t2.5\t3\n";
    const std::string path = dir.write("times.tsv", text);
    DelimitedReadOptions with = one_eye_options(), without = with;
    with.layout.time_unit = without.layout.time_unit = form.unit;
    without.row_groups = false;
    Reading a, b;
    read_into(a, path, with);
    read_into(b, path, without);
    const std::string first = fixed(form.first, form.decimals);
    EXPECT_EQ(first_difference(a, b), "") << first;
    EXPECT_EQ(a.error, "") << first;
    if (row_groups_supported()) {
      EXPECT_GT(a.result.grouped_rows, 0u) << first;
    }
  }
}

// Forms a group must refuse, each in the fifth row: the group falls back to
// the row path, which reads or reports them; the readings with and without
// groups are the same.
TEST(RowGroups, FormsThatBreakAGroupReadAsWithout) {
  TempDir dir;
  const std::vector<std::string> forms = {"123456789", "1.2.3", "+5", "1e3", " 12", "12 ", "--1", "-", "5-", "1,5",
                                          "0x10", "NaN", "inf", "1234567.89", ".", "", "-1"};
  for (const std::string& f : forms) {
    std::string text = "t\tx\ty\tp\n";
    for (int i = 0; i < 24; ++i) text += std::to_string(1000 + i) + "\t" + (i == 12 ? f : "5.5") + "\t7\t8\n";
    const std::string path = dir.write("breaks.tsv", text);
    DelimitedReadOptions with = one_eye_options(), without = with;
    without.row_groups = false;
    Reading a, b;
    read_into(a, path, with);
    read_into(b, path, without);
    EXPECT_EQ(first_difference(a, b), "") << "'" << f << "'";
  }
}

namespace {

struct Generated {
  std::string text;
  DelimitedReadOptions options;
};

// A random export whose rows are mostly plain: any delimiter, time unit,
// column order, one eye or two, pupil or not, an unmapped column, a message
// column anywhere; now and then a message, a missing token or word, a form a
// group refuses, a CRLF row end, a comment, a repeated or decimal time, a
// number too long for a group. Some files give times as decimal seconds.
Generated mostly_plain_export(std::mt19937_64& rng, std::size_t rows) {
  Generated g;
  auto chance = [&](double p) { return std::uniform_real_distribution<double>(0, 1)(rng) < p; };
  auto pick = [&](int n) { return std::uniform_int_distribution<int>(0, n - 1)(rng); };
  DelimitedReadOptions& o = g.options;
  o.layout.delimiter = "\t,;"[pick(3)];
  o.layout.time_column = "t";
  o.layout.time_unit = std::vector<TimeUnit>{TimeUnit::seconds, TimeUnit::milliseconds, TimeUnit::microseconds,
                                             TimeUnit::nanoseconds}[pick(4)];
  o.layout.comment_prefix = "#";
  // Times as seconds with three decimals, as some lab scripts write them.
  const bool seconds_with_decimals = chance(0.2);
  if (seconds_with_decimals) o.layout.time_unit = TimeUnit::seconds;
  const bool binocular = chance(0.4), pupil = chance(0.7), message = chance(0.7), unmapped = chance(0.3);
  o.layout.left = EyeColumnNames{"lx", "ly", pupil ? "lp" : ""};
  if (binocular) o.layout.right = EyeColumnNames{"rx", "ry", "rp"};
  else if (chance(0.5)) std::swap(o.layout.left, o.layout.right);
  if (message) o.layout.message_column = "msg";
  o.layout.missing_values = {"", ".", "NaN"};
  if (chance(0.5)) o.layout.missing_values.push_back("-1");
  if (chance(0.3)) o.layout.missing_values.push_back("0");
  if (chance(0.2)) o.layout.missing_values = {"n/a"};
  o.layout.zero_gaze_is_missing = chance(0.5);
  o.duplicate_timestamps = DuplicateTimestampPolicy::keep_first;
  o.chunk_rows = chance(0.3) ? static_cast<std::size_t>(1 + pick(100)) : std::size_t{1} << 16;

  std::vector<std::string> header = {"lx", "ly"};
  if (pupil) header.push_back("lp");
  if (binocular) header.insert(header.end(), {"rx", "ry", "rp"});
  if (unmapped) header.insert(header.begin() + pick(static_cast<int>(header.size()) + 1), "extra");
  if (message) header.insert(header.begin() + pick(static_cast<int>(header.size()) + 1), "msg");
  const int time_at = chance(0.7) ? 0 : pick(static_cast<int>(header.size()) + 1);
  header.insert(header.begin() + time_at, "t");
  const std::string sep(1, o.layout.delimiter);
  const bool crlf = chance(0.2);
  for (std::size_t c = 0; c < header.size(); ++c) g.text += (c ? sep : "") + header[c];
  g.text += crlf ? "\r\n" : "\n";

  const double odd = std::vector<double>{0.001, 0.003, 0.01}[pick(3)];  // how often a field is unusual
  auto plain = [&]() -> std::string {
    switch (pick(12)) {
      case 0: return std::to_string(pick(100000000));                    // up to eight digits
      case 1: return "-" + std::to_string(pick(1000)) + "." + std::to_string(pick(10));
      case 2: return std::to_string(pick(10)) + "." + std::to_string(1000000 + pick(9000000)).substr(1);  // 0.000123
      case 3: return std::to_string(pick(100000)) + ".";
      case 4: return "." + std::to_string(pick(1000));
      default: return std::to_string(pick(2000)) + "." + std::to_string(pick(10));
    }
  };
  // Readable by any path, so that a file is compared to its end: the
  // layout's tokens and numbers a group refuses or that look like tokens.
  std::vector<std::string> unusual_forms = o.layout.missing_values;
  for (const char* u : {"-1", "0", "-0", "1e2", "123456789", "0.0", "1234567.89", "-12345678"}) unusual_forms.push_back(u);
  auto unusual = [&] { return unusual_forms[pick(static_cast<int>(unusual_forms.size()))]; };
  auto field = [&] { return chance(odd) ? unusual() : plain(); };
  std::uint64_t t = chance(0.2) ? 99999000 : 1000 + pick(100000);  // some cross into nine digits
  for (std::size_t r = 0; r < rows; ++r) {
    if (chance(odd / 4)) {
      g.text += "# a comment\n";
      continue;
    }
    if (!chance(odd)) t += 1 + (chance(0.01) ? pick(50) : 0);  // else a repeat
    std::string time = std::to_string(t);
    if (seconds_with_decimals) {
      time = std::to_string(t / 1000) + "." + std::to_string(1000 + t % 1000).substr(1);  // 12.345
    } else if (chance(odd / 4)) {
      time += ".5", ++t;  // a decimal time, and the next is later even if repeated
    }
    std::vector<std::string> f;
    for (const std::string& name : header) {
      if (name == "t") f.push_back(time);
      else if (name == "msg") f.push_back(chance(odd) ? "MARK " + std::to_string(r) : "");
      else if (name == "extra") f.push_back(chance(0.5) ? "x y" : "");
      else f.push_back(field());
    }
    for (std::size_t c = 0; c < f.size(); ++c) g.text += (c ? sep : "") + f[c];
    g.text += crlf || chance(odd / 4) ? "\r\n" : "\n";
  }
  return g;
}

}  // namespace

// Random mostly-plain files read three ways: with groups (the default), on
// the common-row path without groups, and on the careful path alone. All
// three agree in every sample and in the summary, and most rows went through
// groups, or the comparison would say little.
TEST(RowGroups, SameResultAsTheCarefulPath) {
  TempDir dir;
  std::mt19937_64 rng(21);
  std::uint64_t rows = 0, grouped = 0;
  for (int round = 0; round < 60; ++round) {
    const Generated g = mostly_plain_export(rng, round % 10 == 9 ? 50000 : 500 + round * 61);
    const std::string path = dir.write("plain" + std::to_string(round) + ".csv", g.text);
    DelimitedReadOptions no_groups = g.options, careful = g.options;
    no_groups.row_groups = false;
    careful.common_row_path = false;
    careful.map_plain_files = round % 2 == 0;
    Reading quick, middle, slow;
    read_into(quick, path, g.options);
    read_into(middle, path, no_groups);
    read_into(slow, path, careful);
    EXPECT_EQ(first_difference(quick, slow), "") << "round " << round;
    EXPECT_EQ(first_difference(middle, slow), "") << "round " << round;
    EXPECT_EQ(quick.error, "") << "round " << round;
    rows += quick.result.rows;
    grouped += quick.result.grouped_rows;
  }
  if (row_groups_supported()) {
    EXPECT_GT(grouped, rows / 2) << grouped << " of " << rows << " rows read in groups";
  }
}
