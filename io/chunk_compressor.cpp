#include "io/chunk_compressor.h"

#include <libdeflate.h>

#include <cstring>
#include <memory>
#include <stdexcept>

#include "io/hdf5_util.h"

namespace gazemill {

CompressionPool::CompressionPool(unsigned threads) {
  if (threads == 0) threads = 1;
  for (unsigned i = 0; i < threads; ++i) {
    workers_.emplace_back([this] {
      for (;;) {
        std::packaged_task<std::vector<char>()> job;
        {
          std::unique_lock lock(mutex_);
          ready_.wait(lock, [this] { return stop_ || !jobs_.empty(); });
          if (stop_ && jobs_.empty()) return;
          job = std::move(jobs_.front());
          jobs_.pop_front();
        }
        job();
      }
    });
  }
}

CompressionPool::~CompressionPool() {
  {
    std::lock_guard lock(mutex_);
    stop_ = true;
  }
  ready_.notify_all();
  for (auto& w : workers_) w.join();
}

std::future<std::vector<char>> CompressionPool::submit(std::function<std::vector<char>()> job) {
  std::packaged_task<std::vector<char>()> task(std::move(job));
  auto fut = task.get_future();
  {
    std::lock_guard lock(mutex_);
    jobs_.push_back(std::move(task));
  }
  ready_.notify_one();
  return fut;
}

std::vector<char> shuffle_and_deflate(const char* data, std::size_t bytes, std::size_t element_size, int level) {
  std::vector<char> shuffled(bytes);
  const std::size_t n = bytes / element_size;
  if (element_size > 1 && n > 1) {
    for (std::size_t b = 0; b < element_size; ++b) {
      char* out = shuffled.data() + b * n;
      const char* in = data + b;
      for (std::size_t i = 0; i < n; ++i) out[i] = in[i * element_size];
    }
    // Bytes beyond a whole number of elements are copied unchanged, as HDF5 does.
    std::memcpy(shuffled.data() + n * element_size, data + n * element_size, bytes - n * element_size);
  } else {
    std::memcpy(shuffled.data(), data, bytes);
  }
  // libdeflate writes the same zlib format as zlib's compress2, several times
  // faster; one compressor per thread and level, reused.
  thread_local std::unique_ptr<libdeflate_compressor, void (*)(libdeflate_compressor*)> compressor{nullptr, libdeflate_free_compressor};
  thread_local int compressor_level = -1;
  if (!compressor || compressor_level != level) {
    compressor.reset(libdeflate_alloc_compressor(level));
    compressor_level = level;
    if (!compressor) throw std::runtime_error("cannot create a deflate compressor");
  }
  std::vector<char> out(libdeflate_zlib_compress_bound(compressor.get(), bytes));
  const std::size_t written = libdeflate_zlib_compress(compressor.get(), shuffled.data(), bytes, out.data(), out.size());
  if (written == 0) throw std::runtime_error("deflate compression failed");
  out.resize(written);
  return out;
}

void ChunkWriteQueue::push(hid_t dataset, hsize_t first_row, hsize_t rows_after,
                           std::future<std::vector<char>> chunk) {
  pending_.push_back({dataset, first_row, rows_after, std::move(chunk)});
  while (pending_.size() > max_pending_) write_front();
}

void ChunkWriteQueue::drain() {
  while (!pending_.empty()) write_front();
}

void ChunkWriteQueue::write_front() {
  Pending p = std::move(pending_.front());
  pending_.pop_front();
  const std::vector<char> bytes = p.chunk.get();
  // The extent must cover a chunk before it can be written directly.
  if (H5Dset_extent(p.dataset, &p.rows_after) < 0) throw std::runtime_error("cannot extend dataset");
  if (H5Dwrite_chunk(p.dataset, H5P_DEFAULT, 0, &p.first_row, bytes.size(), bytes.data()) < 0) {
    throw std::runtime_error("cannot write a compressed chunk");
  }
}

ChunkedColumnWriter::ChunkedColumnWriter(H5::Group& group, const std::string& name, const H5::PredType& type,
                                         std::size_t element_size, hsize_t chunk_rows, int level,
                                         CompressionPool& pool, ChunkWriteQueue& queue)
    : element_size_(element_size), chunk_rows_(chunk_rows), level_(level), pool_(pool), queue_(queue) {
  const hsize_t zero = 0, unlimited = H5S_UNLIMITED;
  H5::DataSpace space(1, &zero, &unlimited);
  dataset_ = group.createDataSet(name, type, space, h5::chunked_props(chunk_rows, level));
  staged_.reserve(chunk_rows * element_size);
}

void ChunkedColumnWriter::append(const void* values, std::size_t count) {
  const char* p = static_cast<const char*>(values);
  const std::size_t chunk_bytes = chunk_rows_ * element_size_;
  std::size_t bytes = count * element_size_;
  rows_total_ += count;
  while (bytes > 0) {
    const std::size_t take = std::min(bytes, chunk_bytes - staged_.size());
    staged_.insert(staged_.end(), p, p + take);
    p += take;
    bytes -= take;
    if (staged_.size() == chunk_bytes) submit_staged();
  }
}

void ChunkedColumnWriter::submit_staged() {
  if (staged_.empty()) return;
  const hsize_t rows = staged_.size() / element_size_;
  staged_.resize(chunk_rows_ * element_size_, 0);  // chunks are always whole; padding is beyond the extent
  const std::size_t esize = element_size_;
  const int level = level_;
  auto job = [buf = std::move(staged_), esize, level] { return shuffle_and_deflate(buf.data(), buf.size(), esize, level); };
  const hsize_t first = rows_written_;
  rows_written_ += rows;
  queue_.push(dataset_.getId(), first, first + chunk_rows_, pool_.submit(std::move(job)));
  staged_ = std::vector<char>();
  staged_.reserve(chunk_rows_ * element_size_);
}

void ChunkedColumnWriter::flush() { submit_staged(); }

void ChunkedColumnWriter::set_final_extent() {
  const hsize_t n = rows_total_;
  dataset_.extend(&n);
}

}  // namespace gazemill
