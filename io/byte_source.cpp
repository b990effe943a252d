#include "io/byte_source.h"

#include <fcntl.h>
#include <isa-l/igzip_lib.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

#include "pipeline/input_error.h"

namespace gazemill {

// gzip is inflated by ISA-L (Debian's libisal), several times quicker than
// zlib on sample exports; it checks each member's CRC-32 and length. Files of
// several members (concatenated gzip streams, as `cat a.gz b.gz` makes) read
// as one text.
struct ByteSource::Gzip {
  inflate_state state{};
  std::vector<std::uint8_t> input = std::vector<std::uint8_t>(std::size_t{1} << 18);
  bool input_ended = false;  // the file has no more bytes
  bool finished = false;     // the last member ended and nothing followed
  bool in_member = false;    // output produced since the last member's start
  std::uint64_t consumed = 0;  // file bytes handed to inflate
};

namespace {

bool gzip_magic(const std::uint8_t* p, std::size_t n) { return n >= 2 && p[0] == 0x1f && p[1] == 0x8b; }

}  // namespace

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
  if (got == 2 && gzip_magic(magic, 2)) {
    gzip_ = std::make_unique<Gzip>();
    isal_inflate_init(&gzip_->state);
    gzip_->state.crc_flag = ISAL_GZIP;
    gzip_->state.avail_in = 0;
  }
  posix_fadvise(fd_, 0, 0, POSIX_FADV_SEQUENTIAL);
}

ByteSource::~ByteSource() {
  if (fd_ >= 0) ::close(fd_);
}

std::size_t ByteSource::read(char* buffer, std::size_t capacity) {
  return gzip_ ? read_gzip(buffer, capacity) : read_plain(buffer, capacity);
}

std::size_t ByteSource::read_plain(char* buffer, std::size_t capacity) {
  for (;;) {
    const ssize_t n = ::read(fd_, buffer, capacity);
    if (n >= 0) {
      plain_offset_ += static_cast<std::uint64_t>(n);
      return static_cast<std::size_t>(n);
    }
    if (errno != EINTR) throw InputError({path_, 0, ""}, std::string("read failed: ") + std::strerror(errno));
  }
}

std::size_t ByteSource::read_gzip(char* buffer, std::size_t capacity) {
  Gzip& g = *gzip_;
  inflate_state& s = g.state;
  std::size_t produced = 0;
  while (produced < capacity && !g.finished) {
    if (s.avail_in == 0 && !g.input_ended) {
      std::size_t n = 0;
      for (;;) {
        const ssize_t r = ::read(fd_, g.input.data(), g.input.size());
        if (r >= 0) {
          n = static_cast<std::size_t>(r);
          break;
        }
        if (errno != EINTR) throw InputError({path_, 0, ""}, std::string("read failed: ") + std::strerror(errno));
      }
      g.input_ended = n == 0;
      s.next_in = g.input.data();
      s.avail_in = static_cast<std::uint32_t>(n);
      g.consumed += n;
    }
    s.next_out = reinterpret_cast<std::uint8_t*>(buffer + produced);
    s.avail_out = static_cast<std::uint32_t>(capacity - produced);
    const std::uint32_t before = s.avail_out;
    const std::uint32_t in_before = s.avail_in;
    const int rc = isal_inflate(&s);
    produced += before - s.avail_out;
    g.in_member = g.in_member || before != s.avail_out;
    if (rc != ISAL_DECOMP_OK && rc != ISAL_END_INPUT) {
      throw InputError({path_, 0, ""}, "gzip data is corrupt (" +
                                           std::string(rc == ISAL_INCORRECT_CHECKSUM ? "checksum mismatch" : "invalid stream") +
                                           ")");
    }
    if (s.block_state == ISAL_BLOCK_FINISH) {
      // A member ended. Another may follow; anything else is trailing bytes.
      if (s.avail_in == 0 && !g.input_ended) {
        const ssize_t r = ::read(fd_, g.input.data(), g.input.size());
        if (r < 0 && errno != EINTR) throw InputError({path_, 0, ""}, std::string("read failed: ") + std::strerror(errno));
        const std::size_t n = r > 0 ? static_cast<std::size_t>(r) : 0;
        g.input_ended = n == 0;
        s.next_in = g.input.data();
        s.avail_in = static_cast<std::uint32_t>(n);
        g.consumed += n;
      }
      if (s.avail_in == 0) {
        g.finished = true;
        break;
      }
      if (!gzip_magic(s.next_in, s.avail_in)) {
        // Not a gzip member: counted, not read (zero padding from a tape or a
        // copy, or damage); the caller reports it.
        trailing_bytes_ = s.avail_in;
        for (;;) {
          const ssize_t r = ::read(fd_, g.input.data(), g.input.size());
          if (r > 0) {
            trailing_bytes_ += static_cast<std::uint64_t>(r);
            g.consumed += static_cast<std::uint64_t>(r);
            continue;
          }
          if (r < 0 && errno == EINTR) continue;
          break;
        }
        g.finished = true;
        break;
      }
      const std::uint8_t* rest = s.next_in;
      const std::uint32_t rest_n = s.avail_in;
      isal_inflate_reset(&s);
      s.crc_flag = ISAL_GZIP;
      s.next_in = const_cast<std::uint8_t*>(rest);
      s.avail_in = rest_n;
      g.in_member = false;
      continue;
    }
    const bool stuck = before == s.avail_out && in_before == s.avail_in;
    if (g.input_ended && s.avail_in == 0 && (rc == ISAL_END_INPUT || stuck)) {
      // The file ended inside a member: an interrupted copy or download.
      throw InputError({path_, 0, ""}, "the gzip data ends in the middle of its stream: the file is truncated "
                                       "(an interrupted copy or download?)");
    }
    if (stuck && s.avail_in > 0) throw InputError({path_, 0, ""}, "gzip data is corrupt (no progress inflating it)");
  }
  return produced;
}

std::uint64_t ByteSource::current_size() const {
  struct stat st {};
  if (::fstat(fd_, &st) != 0) throw InputError({path_, 0, ""}, std::string("cannot stat the file: ") + std::strerror(errno));
  return static_cast<std::uint64_t>(st.st_size);
}

void ByteSource::seek(std::uint64_t offset) {
  if (gzip_ || ::lseek(fd_, static_cast<off_t>(offset), SEEK_SET) < 0) {
    throw InputError({path_, 0, ""}, std::string("cannot seek in the file: ") + std::strerror(errno));
  }
  plain_offset_ = offset;
}

std::uint64_t ByteSource::raw_offset() const {
  if (gzip_) return gzip_->consumed - gzip_->state.avail_in;
  return plain_offset_;
}

}  // namespace gazemill
