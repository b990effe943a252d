#pragma once
// Readers push samples in chunks so that a recording of any length streams
// through bounded memory; the store writer and test collectors are sinks.

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

/// Drops everything (parse-only benchmarks).
class NullSink : public SampleSink {
 public:
  void append(const SampleColumns&) override {}
};

}  // namespace gazemill
