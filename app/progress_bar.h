#pragma once
// A one-line progress bar on stderr, drawn only when stderr is a terminal
// and the work has lasted long enough to be worth watching.

#include <chrono>
#include <cstdint>
#include <string>

namespace gazemill {

class ProgressBar {
 public:
  explicit ProgressBar(bool enabled);
  ~ProgressBar();
  void update(const std::string& label, std::uint64_t done, std::uint64_t total);
  void finish();

 private:
  bool enabled_;
  bool drawn_ = false;
  std::chrono::steady_clock::time_point start_;
  std::chrono::steady_clock::time_point last_draw_;
};

/// True when stderr is an interactive terminal.
bool stderr_is_terminal();

}  // namespace gazemill
