// Coverage-guided fuzzing of the delimited reader (libFuzzer, clang only;
// built by scripts/fuzz, not by the normal build).
//
// Any input must end in samples or in an InputError; anything else (a crash,
// a sanitizer report, another exception) is a bug. The same bytes are also
// read three ways that must agree exactly: mapped windows with the quick path
// for common rows, read() copies with the quick path, and read() copies with
// the careful path alone. Disagreement aborts, so the fuzzer keeps the input.
//
// The first input byte chooses the layout (delimiter, one or two eyes, time
// unit, numeric missing token, zero gaze rule, header or none); the rest is
// the file. Seeds are in tests/fuzz/seeds/reader.

#include <unistd.h>

#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <string>

#include "io/delimited_reader.h"
#include "tests/reading_comparison.h"

using namespace gazemill;
using namespace gazemill::test_support;

namespace {

DelimitedReadOptions options_from(std::uint8_t bits) {
  DelimitedReadOptions o;
  o.layout.delimiter = (bits & 1) ? ',' : '\t';
  o.layout.time_column = "t";
  o.layout.time_unit = (bits & 2) ? TimeUnit::microseconds : TimeUnit::milliseconds;
  o.layout.message_column = "msg";
  o.layout.comment_prefix = "#";
  o.layout.left = EyeColumnNames{"x", "y", "p"};
  if (bits & 4) o.layout.right = EyeColumnNames{"rx", "ry", ""};
  if (bits & 8) o.layout.missing_values.push_back("-1");
  o.layout.zero_gaze_is_missing = (bits & 16) != 0;
  o.duplicate_timestamps = (bits & 32) ? DuplicateTimestampPolicy::keep_first : DuplicateTimestampPolicy::error;
  if (bits & 64) o.column_names = {"t", "x", "y", "p", "rx", "ry", "msg"};  // headerless, as BIDS
  o.chunk_rows = (bits & 128) ? 3 : 64;  // small chunks: they end mid-run, and big ones only slow fuzzing
  return o;
}

std::string scratch_path() {
  const char* dir = std::getenv("TMPDIR");
  return std::string(dir ? dir : "/tmp") + "/gazemill-fuzz-" + std::to_string(::getpid()) + ".csv";
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 1) return 0;
  static const std::string path = scratch_path();
  {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out.write(reinterpret_cast<const char*>(data + 1), static_cast<std::streamsize>(size - 1));
  }
  DelimitedReadOptions mapped = options_from(data[0]);
  mapped.mapped_window_bytes = 1;  // one page: rows cross window edges
  DelimitedReadOptions copied = mapped;
  copied.map_plain_files = false;
  DelimitedReadOptions careful = copied;
  careful.common_row_path = false;
  Reading a, b, c;
  read_into(a, path, mapped);
  read_into(b, path, copied);
  read_into(c, path, careful);
  if (const std::string d = first_difference(a, b); !d.empty()) {
    std::fprintf(stderr, "mapped and read() disagree in %s\n", d.c_str());
    std::abort();
  }
  if (const std::string d = first_difference(b, c); !d.empty()) {
    std::fprintf(stderr, "quick and careful paths disagree in %s\n", d.c_str());
    std::abort();
  }
  return 0;
}
