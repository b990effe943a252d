#pragma once
// Reading one file two ways and saying where the readings differ: shared by
// the tests that hold the reader's paths equal (test_common_rows.cpp) and by
// the fuzzing harness that does the same on arbitrary bytes.

#include <cmath>
#include <cstring>
#include <string>
#include <vector>

#include "io/delimited_reader.h"
#include "pipeline/input_error.h"

namespace gazemill::test_support {

/// Bit for bit, except that any NaN equals any NaN.
inline bool same_float(float a, float b) { return std::memcmp(&a, &b, sizeof a) == 0 || (std::isnan(a) && std::isnan(b)); }

/// One reading of a file: its samples and summary, or the error it gave.
struct Reading {
  CollectingSink sink;
  DelimitedReadResult result;
  std::string error;
};

/// Reads `path` into `r`; an InputError becomes r.error, anything else escapes.
inline void read_into(Reading& r, const std::string& path, const DelimitedReadOptions& o) {
  try {
    r.result = read_delimited(path, o, r.sink);
  } catch (const InputError& e) {
    r.error = e.what();
  }
}

/// The first thing in which two readings differ, or "" when they agree in
/// the error, every sample column and every field of the summary.
inline std::string first_difference(const Reading& a, const Reading& b) {
  if (a.error != b.error) return "error: '" + a.error + "' against '" + b.error + "'";
  if (!a.error.empty()) return "";
  const SampleColumns& sa = a.sink.samples;
  const SampleColumns& sb = b.sink.samples;
  if (sa.time_us != sb.time_us) return "time_us";
  const auto floats = [](const std::vector<float>& x, const std::vector<float>& y, const char* what) -> std::string {
    if (x.size() != y.size()) return std::string(what) + " sizes";
    for (std::size_t i = 0; i < x.size(); ++i)
      if (!same_float(x[i], y[i])) return std::string(what) + " at " + std::to_string(i);
    return "";
  };
  for (const auto& [qa, qb] : {std::pair{&sa.left, &sb.left}, std::pair{&sa.right, &sb.right}}) {
    for (const std::string& d : {floats(qa->x_px, qb->x_px, "x"), floats(qa->y_px, qb->y_px, "y"),
                                 floats(qa->pupil, qb->pupil, "pupil")})
      if (!d.empty()) return d;
    if (qa->valid != qb->valid) return "valid";
  }
  const DelimitedReadResult& x = a.result;
  const DelimitedReadResult& y = b.result;
  if (x.samples != y.samples) return "samples";
  if (x.rows != y.rows) return "rows";
  if (x.missing_left != y.missing_left) return "missing_left";
  if (x.missing_right != y.missing_right) return "missing_right";
  if (x.first_time_us != y.first_time_us) return "first_time_us";
  if (x.last_time_us != y.last_time_us) return "last_time_us";
  if (x.median_interval_us != y.median_interval_us) return "median_interval_us";
  if (x.message_lines != y.message_lines) return "message_lines";
  if (x.repairs != y.repairs) return "repairs";
  if (x.messages.size() != y.messages.size()) return "message count";
  for (std::size_t i = 0; i < x.messages.size(); ++i) {
    if (x.messages[i].time_us != y.messages[i].time_us) return "message time at " + std::to_string(i);
    if (x.messages[i].text != y.messages[i].text) return "message text at " + std::to_string(i);
  }
  return "";
}

}  // namespace gazemill::test_support
