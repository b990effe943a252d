#pragma once
// Writes 1-D columns as HDF5 chunks that worker threads have already
// shuffled and deflated, so compression (the slow part of writing) runs on
// every core while the calling thread keeps parsing. The file gets the same
// bytes the HDF5 shuffle + deflate filters would write, so any reader (h5py
// included) decodes it with the standard filters.

#include <H5Cpp.h>

#include <condition_variable>
#include <cstdint>
#include <deque>
#include <functional>
#include <future>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

namespace gazemill {

/// A fixed set of worker threads running compression jobs.
class CompressionPool {
 public:
  explicit CompressionPool(unsigned threads);
  ~CompressionPool();
  CompressionPool(const CompressionPool&) = delete;
  CompressionPool& operator=(const CompressionPool&) = delete;
  std::future<std::vector<char>> submit(std::function<std::vector<char>()> job);

  /// An empty buffer, with the capacity of one handed back earlier if any, so
  /// that staging a chunk seldom touches fresh pages.
  std::vector<char> take_buffer();
  void give_back(std::vector<char> buffer);

 private:
  std::mutex spare_mutex_;
  std::vector<std::vector<char>> spare_;
  std::vector<std::thread> workers_;
  std::deque<std::packaged_task<std::vector<char>()>> jobs_;
  std::mutex mutex_;
  std::condition_variable ready_;
  bool stop_ = false;
};

/// Shuffle, then deflate in the zlib format: what HDF5's H5Z_FILTER_SHUFFLE and
/// H5Z_FILTER_DEFLATE read back (the bytes may differ from zlib's own output).
std::vector<char> shuffle_and_deflate(const char* data, std::size_t bytes, std::size_t element_size, int level);
/// Its inverse: inflates `bytes` of zlib data into exactly `out_bytes` at
/// `out`, then unshuffles elements of `element_size` bytes (1: no shuffle).
/// False when the data are damaged or inflate to another length.
bool inflate_and_unshuffle(const char* data, std::size_t bytes, char* out, std::size_t out_bytes, std::size_t element_size);

/// Compressed chunks waiting to be written, oldest first; bounded in number so
/// memory stays flat however long the recording is.
class ChunkWriteQueue {
 public:
  explicit ChunkWriteQueue(std::size_t max_pending) : max_pending_(max_pending) {}
  void push(hid_t dataset, hsize_t first_row, hsize_t rows_after, std::future<std::vector<char>> chunk);
  void drain();  // writes everything pending

 private:
  struct Pending {
    hid_t dataset;
    hsize_t first_row;
    hsize_t rows_after;  // dataset extent once this chunk is written
    std::future<std::vector<char>> chunk;
  };
  void write_front();
  std::size_t max_pending_;
  std::deque<Pending> pending_;
};

/// Appends values of one fixed-size type to an extendible 1-D dataset.
class ChunkedColumnWriter {
 public:
  ChunkedColumnWriter(H5::Group& group, const std::string& name, const H5::PredType& type, std::size_t element_size,
                      hsize_t chunk_rows, int level, CompressionPool& pool, ChunkWriteQueue& queue);
  void append(const void* values, std::size_t count);
  /// Sends the last partial chunk; call ChunkWriteQueue::drain() then set_final_extent().
  void flush();
  void set_final_extent();
  H5::DataSet& dataset() { return dataset_; }

 private:
  void submit_staged();
  H5::DataSet dataset_;
  std::size_t element_size_;
  hsize_t chunk_rows_;
  int level_;
  CompressionPool& pool_;
  ChunkWriteQueue& queue_;
  std::vector<char> staged_;
  hsize_t rows_written_ = 0;  // rows submitted in whole chunks
  hsize_t rows_total_ = 0;
};

}  // namespace gazemill
