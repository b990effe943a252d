#pragma once
// A recording's sample columns held as the store's own chunks (shuffled and
// deflated, 65 536 rows each), so that a recording is compressed once, on
// the thread that read it, and its chunks go into the store unchanged. While
// a recording fits a memory budget its samples are also kept as they are;
// beyond it they are decoded from the chunks trial by trial, so that a long
// recording costs memory in proportion to its compressed size.

#include <cstdint>
#include <string>
#include <vector>

#include "pipeline/recording.h"
#include "pipeline/sample_sink.h"

namespace gazemill {

enum class ColumnType { int64, float32, uint8 };
std::size_t element_size(ColumnType type);

/// One 1-D column as HDF5 chunks (chunk k holds rows [k * chunk_rows, ...)).
struct CompressedColumn {
  std::string name;  // its dataset name in the store, e.g. "left_x_px"
  ColumnType type = ColumnType::float32;
  std::string unit;  // "" for none
  std::uint64_t rows = 0;
  std::size_t chunk_rows = 0;
  std::vector<std::vector<char>> chunks;
  std::uint64_t compressed_bytes() const;
};

/// Compresses `values` (rows of `type`) into a column of whole chunks, as the store writes them.
CompressedColumn compress_column(const std::string& name, ColumnType type, const std::string& unit, const void* values,
                                 std::uint64_t rows, std::size_t chunk_rows, int deflate_level);
/// Decodes chunk `k` (inflate, unshuffle) into `out`, resized to the chunk's rows in bytes.
/// Throws std::runtime_error when the chunk is damaged.
void decode_chunk(const CompressedColumn& column, std::size_t k, std::vector<char>& out);
/// Every row of a column.
std::vector<char> decode_column(const CompressedColumn& column);

/// Every sample of a recording from its stored chunks (time_us, then per recorded eye x, y, pupil, valid).
SampleColumns decode_samples(bool left, bool right, std::vector<CompressedColumn> columns);

/// A sink that compresses samples as they arrive.
class CompressedSamples : public SampleSink {
 public:
  CompressedSamples(bool left, bool right, std::size_t chunk_rows, int deflate_level, std::uint64_t raw_budget_bytes);
  /// From chunks already compressed (read back from a store): time_us, then per eye x, y, pupil, valid.
  CompressedSamples(bool left, bool right, std::vector<CompressedColumn> columns, std::uint64_t raw_budget_bytes);

  void append(const SampleColumns& chunk) override;
  /// Compresses the last, partial chunk; no append after it.
  void finish();

  std::uint64_t size() const { return rows_; }
  bool has_left() const { return left_; }
  bool has_right() const { return right_; }
  /// The index range [first, last) of the samples timed within [start_us, end_us].
  std::pair<std::size_t, std::size_t> range(Microseconds start_us, Microseconds end_us) const;
  /// Samples [first, last) with every recorded eye.
  SampleColumns slice(std::size_t first, std::size_t last) const;
  /// The columns in store order: time_us, then per recorded eye x_px, y_px, pupil, valid.
  const std::vector<CompressedColumn>& columns() const { return columns_; }
  std::uint64_t compressed_bytes() const;
  /// Rows with no valid gaze in any recorded eye, counted as the samples
  /// arrived; -1 for samples read back from a store (not counted).
  std::int64_t rows_without_gaze() const { return counted_ ? static_cast<std::int64_t>(without_gaze_) : -1; }
  /// Releases the chunks once they are in the store (slice() keeps working while raw).
  void drop_chunks();

 private:
  void compress_staged();
  SampleColumns fresh_chunk() const;
  bool left_, right_;
  std::size_t chunk_rows_;
  int level_;
  std::uint64_t raw_budget_bytes_;
  bool raw_ = true;          // every sample is also in raw_chunks_ (within the budget)
  std::vector<SampleColumns> raw_chunks_;  // chunk k holds rows [k * chunk_rows, ...)
  SampleColumns staged_;     // rows waiting for a whole chunk
  std::uint64_t rows_ = 0;
  bool counted_ = true;
  std::uint64_t without_gaze_ = 0;
  // Each chunk's first and last time: trials are found by time without all
  // the times in memory (115 MB for two hours at 2000 Hz).
  std::vector<Microseconds> chunk_first_us_, chunk_last_us_;
  std::size_t lower_bound(Microseconds t) const;  // first sample at or after t
  std::size_t upper_bound(Microseconds t) const;  // first sample after t
  const std::vector<Microseconds>& chunk_times(std::size_t k) const;
  mutable std::size_t times_chunk_ = static_cast<std::size_t>(-1);
  mutable std::vector<Microseconds> times_;
  std::vector<CompressedColumn> columns_;
  // The last chunk decoded per column, for consecutive slices.
  mutable std::vector<std::size_t> cached_chunk_;
  mutable std::vector<std::vector<char>> cached_;
};

}  // namespace gazemill
