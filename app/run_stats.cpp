#include "app/run_stats.h"

#include <sys/resource.h>

#include <fmt/format.h>

#include <cstdio>

namespace gazemill {

RunClock::RunClock() : start_(std::chrono::steady_clock::now()) {}

std::uint64_t peak_rss_bytes() {
  // VmHWM, not getrusage: Linux carries ru_maxrss over from the parent across
  // fork and exec, so a child of a large process would report the parent's peak.
  std::FILE* f = std::fopen("/proc/self/status", "r");
  if (!f) return 0;
  char line[256];
  unsigned long long kb = 0;
  while (std::fgets(line, sizeof line, f)) {
    if (std::sscanf(line, "VmHWM: %llu kB", &kb) == 1) break;
  }
  std::fclose(f);
  return kb * 1024u;
}

std::string RunClock::summary(std::uint64_t bytes) const {
  const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
  rusage u{};
  getrusage(RUSAGE_SELF, &u);
  const double cpu = static_cast<double>(u.ru_utime.tv_sec + u.ru_stime.tv_sec) +
                     static_cast<double>(u.ru_utime.tv_usec + u.ru_stime.tv_usec) / 1e6;
  std::string s = fmt::format("{:.2f} s wall, {:.2f} s CPU, peak {:.0f} MB", wall, cpu,
                              static_cast<double>(peak_rss_bytes()) / 1e6);
  if (bytes > 0 && wall > 0) s += fmt::format(", {:.0f} MB/s of input", static_cast<double>(bytes) / 1e6 / wall);
  return s;
}

}  // namespace gazemill
