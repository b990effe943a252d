#pragma once
// A private, writable mapping of part of a plain file. Pages are shared with
// the page cache until written; a write (the reader's one '\0' sentinel)
// copies that page for this mapping only and never reaches the file.

#include <cstddef>
#include <cstdint>
#include <memory>

namespace gazemill {

class MappedWindow {
 public:
  /// Maps bytes [offset, offset + length) of the open file `fd`; offset must be
  /// a multiple of the page size. Null when the system refuses (the caller
  /// reads the file instead).
  static std::unique_ptr<MappedWindow> map(int fd, std::uint64_t offset, std::size_t length);
  ~MappedWindow();
  MappedWindow(const MappedWindow&) = delete;
  MappedWindow& operator=(const MappedWindow&) = delete;

  char* data() const { return data_; }
  std::size_t size() const { return size_; }
  /// Bytes the mapping covers beyond size(): the rest of its last page. Past
  /// the end of the file they read as zero and may be written.
  std::size_t slack() const { return mapped_ - size_; }

  static std::size_t page_size();

 private:
  MappedWindow() = default;
  char* data_ = nullptr;
  std::size_t size_ = 0;
  std::size_t mapped_ = 0;
};

}  // namespace gazemill
