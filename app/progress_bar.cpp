#include "app/progress_bar.h"

#include <unistd.h>

#include <algorithm>
#include <cstdio>

namespace gazemill {

bool stderr_is_terminal() { return ::isatty(STDERR_FILENO) == 1; }

ProgressBar::ProgressBar(bool enabled)
    : enabled_(enabled), start_(std::chrono::steady_clock::now()), last_draw_(start_) {}

ProgressBar::~ProgressBar() { finish(); }

void ProgressBar::update_run(std::size_t recordings_done, std::size_t recordings, std::uint64_t bytes_done, std::uint64_t bytes,
                             std::uint64_t samples_done, std::chrono::steady_clock::time_point started) {
  if (!enabled_ || recordings == 0) return;
  const auto now = std::chrono::steady_clock::now();
  // Quick work gets no bar; after that redraw at most ten times a second.
  if (now - start_ < std::chrono::seconds(1) || now - last_draw_ < std::chrono::milliseconds(100)) return;
  last_draw_ = now;
  // Reading is most of the work where there is any; otherwise recordings.
  double share = bytes > 0 ? static_cast<double>(bytes_done) / static_cast<double>(bytes)
                           : static_cast<double>(recordings_done) / static_cast<double>(recordings);
  share = std::clamp(share, 0.0, 1.0);
  const double elapsed = std::chrono::duration<double>(now - started).count();
  constexpr int kWidth = 24;
  const int filled = static_cast<int>(share * kWidth);
  std::string bar(static_cast<std::size_t>(filled), '#');
  bar.append(static_cast<std::size_t>(kWidth - filled), '.');
  char left[32] = "";
  if (share > 0.02 && share < 1.0) std::snprintf(left, sizeof left, ", about %.0f s left", elapsed * (1 - share) / share);
  char rate[48] = "";
  if (samples_done > 0 && elapsed > 0) std::snprintf(rate, sizeof rate, ", %.1f M samples/s", static_cast<double>(samples_done) / elapsed / 1e6);
  std::fprintf(stderr, "\r[%s] %zu/%zu recordings%s%s\033[K", bar.c_str(), recordings_done, recordings, rate, left);
  drawn_ = true;
}

void ProgressBar::finish() {
  if (drawn_) std::fprintf(stderr, "\r\033[K");
  drawn_ = false;
}

}  // namespace gazemill
