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
  /// A study run: recordings finished of all, input bytes read of all (0 when
  /// nothing is read from files), samples done, and when the run began.
  void update_run(std::size_t recordings_done, std::size_t recordings, std::uint64_t bytes_done, std::uint64_t bytes,
                  std::uint64_t samples_done, std::chrono::steady_clock::time_point started);
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
