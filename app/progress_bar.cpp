#include "app/progress_bar.h"

#include <unistd.h>

#include <cstdio>
#include <filesystem>

namespace gazemill {

bool stderr_is_terminal() { return ::isatty(STDERR_FILENO) == 1; }

ProgressBar::ProgressBar(bool enabled)
    : enabled_(enabled), start_(std::chrono::steady_clock::now()), last_draw_(start_) {}

ProgressBar::~ProgressBar() { finish(); }

void ProgressBar::update(const std::string& label, std::uint64_t done, std::uint64_t total) {
  if (!enabled_ || total == 0) return;
  const auto now = std::chrono::steady_clock::now();
  // Quick work gets no bar; after that redraw at most ten times a second.
  if (now - start_ < std::chrono::seconds(1) || now - last_draw_ < std::chrono::milliseconds(100)) return;
  last_draw_ = now;
  const double share = std::min(1.0, static_cast<double>(done) / static_cast<double>(total));
  constexpr int kWidth = 30;
  const int filled = static_cast<int>(share * kWidth);
  std::string bar(static_cast<std::size_t>(filled), '#');
  bar.append(static_cast<std::size_t>(kWidth - filled), '.');
  std::fprintf(stderr, "\r[%s] %5.1f%%  %s\033[K", bar.c_str(), 100.0 * share,
               std::filesystem::path(label).filename().c_str());
  drawn_ = true;
}

void ProgressBar::finish() {
  if (drawn_) std::fprintf(stderr, "\r\033[K");
  drawn_ = false;
}

}  // namespace gazemill
