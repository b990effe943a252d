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

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <exception>
#include <fstream>
#include <string>

#include "io/delimited_reader.h"
#include "pipeline/input_error.h"

using namespace gazemill;

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

struct Reading {
  CollectingSink sink;
  DelimitedReadResult result;
  std::string error;
};

void read_into(Reading& r, const std::string& path, const DelimitedReadOptions& o) {
  try {
    r.result = read_delimited(path, o, r.sink);
  } catch (const InputError& e) {
    r.error = e.what();
  }
  // Any other exception escapes and libFuzzer reports it.
}

bool same_floats(const std::vector<float>& a, const std::vector<float>& b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i)
    if (std::memcmp(&a[i], &b[i], sizeof(float)) != 0 && !(std::isnan(a[i]) && std::isnan(b[i]))) return false;
  return true;
}

bool same(const Reading& a, const Reading& b) {
  if (a.error != b.error) return false;
  if (!a.error.empty()) return true;
  const SampleColumns& sa = a.sink.samples;
  const SampleColumns& sb = b.sink.samples;
  if (sa.time_us != sb.time_us) return false;
  for (const auto& [qa, qb] : {std::pair{&sa.left, &sb.left}, std::pair{&sa.right, &sb.right}})
    if (!same_floats(qa->x_px, qb->x_px) || !same_floats(qa->y_px, qb->y_px) || !same_floats(qa->pupil, qb->pupil) ||
        qa->valid != qb->valid)
      return false;
  const DelimitedReadResult& x = a.result;
  const DelimitedReadResult& y = b.result;
  if (x.samples != y.samples || x.rows != y.rows || x.missing_left != y.missing_left ||
      x.missing_right != y.missing_right || x.first_time_us != y.first_time_us || x.last_time_us != y.last_time_us ||
      x.median_interval_us != y.median_interval_us || x.message_lines != y.message_lines || x.repairs != y.repairs ||
      x.messages.size() != y.messages.size())
    return false;
  for (std::size_t i = 0; i < x.messages.size(); ++i)
    if (x.messages[i].time_us != y.messages[i].time_us || x.messages[i].text != y.messages[i].text) return false;
  return true;
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
  if (!same(a, b)) {
    std::fprintf(stderr, "mapped and read() disagree:\n  %s\n  %s\n", a.error.c_str(), b.error.c_str());
    std::abort();
  }
  if (!same(b, c)) {
    std::fprintf(stderr, "quick and careful paths disagree:\n  %s\n  %s\n", b.error.c_str(), c.error.c_str());
    std::abort();
  }
  return 0;
}
