#pragma once
// Wall time, CPU time and peak memory of this process, for the one-line
// summary every command ends with.

#include <chrono>
#include <cstdint>
#include <string>

namespace gazemill {

class RunClock {
 public:
  RunClock();
  /// e.g. "1.23 s wall, 2.01 s CPU, peak 84 MB, 152 MB/s"
  std::string summary(std::uint64_t bytes_processed = 0) const;

 private:
  std::chrono::steady_clock::time_point start_;
};

/// Peak resident set size of this process in bytes.
std::uint64_t peak_rss_bytes();

}  // namespace gazemill
