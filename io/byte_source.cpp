#include "io/byte_source.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>
#include <zlib.h>

#include <cerrno>
#include <cstring>

#include "pipeline/input_error.h"

namespace gazemill {

ByteSource::ByteSource(const std::string& path) : path_(path) {
  fd_ = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd_ < 0) throw InputError({path, 0, ""}, std::string("cannot open file: ") + std::strerror(errno));
  struct stat st {};
  if (::fstat(fd_, &st) == 0) {
    raw_size_ = static_cast<std::uint64_t>(st.st_size);
    regular_ = S_ISREG(st.st_mode);
  }
  unsigned char magic[2] = {0, 0};
  const ssize_t got = ::pread(fd_, magic, 2, 0);
  if (got == 2 && magic[0] == 0x1f && magic[1] == 0x8b) {
    const int dup_fd = ::dup(fd_);
    gzFile gz = gzdopen(dup_fd, "rb");
    if (!gz) {
      ::close(dup_fd);
      throw InputError({path, 0, ""}, "cannot open gzip stream");
    }
    gzbuffer(gz, 1 << 18);
    gz_ = gz;
  }
  posix_fadvise(fd_, 0, 0, POSIX_FADV_SEQUENTIAL);
}

ByteSource::~ByteSource() {
  if (gz_) gzclose(static_cast<gzFile>(gz_));
  if (fd_ >= 0) ::close(fd_);
}

std::size_t ByteSource::read(char* buffer, std::size_t capacity) {
  if (gz_) {
    const int n = gzread(static_cast<gzFile>(gz_), buffer, static_cast<unsigned>(capacity));
    if (n < 0) {
      int code = 0;
      const char* msg = gzerror(static_cast<gzFile>(gz_), &code);
      throw InputError({path_, 0, ""}, std::string("gzip data is corrupt: ") + (msg ? msg : "unknown error"));
    }
    if (static_cast<std::size_t>(n) < capacity) {
      // The end of the data. zlib returns what it has when the file ends in
      // the middle of a stream and reports Z_BUF_ERROR only through gzerror;
      // unchecked, a file cut by an interrupted copy read as a shorter one.
      int code = Z_OK;
      gzerror(static_cast<gzFile>(gz_), &code);
      if (code == Z_BUF_ERROR) {
        throw InputError({path_, 0, ""}, "the gzip data ends in the middle of its stream: the file is truncated "
                                         "(an interrupted copy or download?)");
      }
    }
    return static_cast<std::size_t>(n);
  }
  for (;;) {
    const ssize_t n = ::read(fd_, buffer, capacity);
    if (n >= 0) {
      plain_offset_ += static_cast<std::uint64_t>(n);
      return static_cast<std::size_t>(n);
    }
    if (errno != EINTR) throw InputError({path_, 0, ""}, std::string("read failed: ") + std::strerror(errno));
  }
}

std::uint64_t ByteSource::current_size() const {
  struct stat st {};
  if (::fstat(fd_, &st) != 0) throw InputError({path_, 0, ""}, std::string("cannot stat the file: ") + std::strerror(errno));
  return static_cast<std::uint64_t>(st.st_size);
}

void ByteSource::seek(std::uint64_t offset) {
  if (gz_ || ::lseek(fd_, static_cast<off_t>(offset), SEEK_SET) < 0) {
    throw InputError({path_, 0, ""}, std::string("cannot seek in the file: ") + std::strerror(errno));
  }
  plain_offset_ = offset;
}

std::uint64_t ByteSource::raw_offset() const {
  if (gz_) return static_cast<std::uint64_t>(gzoffset(static_cast<gzFile>(gz_)));
  return plain_offset_;
}

}  // namespace gazemill
