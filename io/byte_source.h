#pragma once
// Sequential reading of a plain or gzip-compressed file in large blocks.

#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

namespace gazemill {

class ByteSource {
 public:
  /// Opens `path`; gzip is recognised by its magic bytes, not by the name.
  /// Throws InputError when the file cannot be opened.
  explicit ByteSource(const std::string& path);
  ~ByteSource();
  ByteSource(const ByteSource&) = delete;
  ByteSource& operator=(const ByteSource&) = delete;

  /// Reads up to `capacity` bytes; returns 0 at end of file. Throws InputError
  /// on a read or decompression error.
  std::size_t read(char* buffer, std::size_t capacity);

  bool compressed() const { return gzip_ != nullptr; }
  /// Bytes consumed from the file on disk so far (for progress reports).
  std::uint64_t raw_offset() const;
  std::uint64_t raw_size() const { return raw_size_; }
  /// A plain regular file (not gzip, not a pipe): it can be mapped instead of read.
  bool mappable() const { return !gzip_ && regular_; }
  int descriptor() const { return fd_; }
  /// The file's size now (it may have changed since it was opened).
  std::uint64_t current_size() const;
  /// Skips ahead without reading (plain files only).
  void seek(std::uint64_t offset);
  /// Bytes after the last gzip member that are no gzip data (ignored; known at the end).
  std::uint64_t gzip_trailing_bytes() const { return trailing_bytes_; }

 private:
  std::string path_;
  int fd_ = -1;
  struct Gzip;  // ISA-L's inflate state and its input buffer
  std::unique_ptr<Gzip> gzip_;
  std::size_t read_gzip(char* buffer, std::size_t capacity);
  std::size_t read_plain(char* buffer, std::size_t capacity);
  std::uint64_t raw_size_ = 0;
  std::uint64_t trailing_bytes_ = 0;
  std::uint64_t plain_offset_ = 0;
  bool regular_ = false;
};

}  // namespace gazemill
