#pragma once
// Readers push samples in chunks so that a recording of any length streams
// through bounded memory; the store writer and test collectors are sinks.

#include <cstdint>

#include "pipeline/recording.h"

namespace gazemill {

class SampleSink {
 public:
  virtual ~SampleSink() = default;
  /// Called for each full chunk and once more for the last partial one.
  /// The chunk is reused by the caller after the call returns.
  virtual void append(const SampleColumns& chunk) = 0;
};

/// Keeps every sample in memory (tests, small recordings).
class CollectingSink : public SampleSink {
 public:
  void append(const SampleColumns& chunk) override;
  SampleColumns samples;
};

/// Sets gaze farther than `margin_px` off the screen missing, counts it per
/// eye, and passes the chunks on. Such gaze is no look at the display: track
/// loss, lid artefacts, a tracker's placeholder values (common practice, no source).
class ScreenMarginSink : public SampleSink {
 public:
  ScreenMarginSink(SampleSink& next, int width_px, int height_px, double margin_px);
  void append(const SampleColumns& chunk) override;
  std::uint64_t offscreen_left = 0;   // samples of each eye set missing here
  std::uint64_t offscreen_right = 0;

 private:
  bool outside(float x, float y) const;
  SampleSink& next_;
  double min_x_, max_x_, min_y_, max_y_;
  SampleColumns copy_;
};

/// Counts samples whose gaze is exactly (0, 0) px and passes the chunks on.
/// Some trackers write lost tracking so; read as gaze, it makes fixations in
/// the screen's corner. Counted only, for a warning: the protocol decides.
class ZeroGazeCountingSink : public SampleSink {
 public:
  explicit ZeroGazeCountingSink(SampleSink& next) : next_(next) {}
  void append(const SampleColumns& chunk) override;
  std::uint64_t zero_gaze = 0;  // samples of either eye
  std::uint64_t samples = 0;

 private:
  SampleSink& next_;
};

/// Drops everything (parse-only benchmarks).
class NullSink : public SampleSink {
 public:
  void append(const SampleColumns&) override {}
};

}  // namespace gazemill
