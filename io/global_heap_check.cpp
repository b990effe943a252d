#include "io/global_heap_check.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdint>
#include <algorithm>
#include <cstring>
#include <memory>
#include <mutex>
#include <set>
#include <tuple>
#include <vector>

#include "pipeline/input_error.h"

namespace gazemill {
namespace {

constexpr std::size_t kHeaderBytes = 16;        // "GCOL", version, 3 reserved, size (8 bytes: our files' length size)
constexpr std::size_t kObjectHeaderBytes = 16;  // index (2), references (2), reserved (4), size (8)
constexpr std::uint64_t kMinCollectionBytes = 4096;

std::uint64_t little_endian(const unsigned char* p, int bytes) {
  std::uint64_t v = 0;
  for (int i = bytes - 1; i >= 0; --i) v = (v << 8) | p[i];
  return v;
}

bool read_at(int fd, std::uint64_t offset, unsigned char* out, std::size_t bytes) {
  std::size_t done = 0;
  while (done < bytes) {
    const ssize_t r = ::pread(fd, out + done, bytes - done, static_cast<off_t>(offset + done));
    if (r < 0 && errno == EINTR) continue;
    if (r <= 0) return false;
    done += static_cast<std::size_t>(r);
  }
  return true;
}

// The offset of the first object that runs past its collection's end, or 0
// when every object fits (a collection cannot start at byte 0: the superblock does).
std::uint64_t damaged_object(int fd, std::uint64_t at, std::uint64_t collection_bytes) {
  std::vector<unsigned char> c(collection_bytes);
  if (!read_at(fd, at, c.data(), c.size())) return 0;  // shorter than said: not a collection
  std::size_t p = kHeaderBytes;
  while (p + kObjectHeaderBytes <= c.size()) {
    const auto index = little_endian(&c[p], 2);
    const auto size = little_endian(&c[p + 8], 8);
    // HDF5 steps to the next object by these lengths; a length that leaves
    // the collection (or wraps) is what it would copy past the end.
    const std::uint64_t room = c.size() - p;
    std::uint64_t need = 0;
    if (index == 0) {
      need = size;
    } else {
      if (size > room) return at + p;
      need = kObjectHeaderBytes + ((size + 7) / 8) * 8;
    }
    if (need == 0 || need > room) return at + p;
    p += static_cast<std::size_t>(need);
  }
  return 0;
}

using FileKey = std::tuple<dev_t, ino_t, off_t, long, long>;

FileKey key_of(const struct stat& st) { return {st.st_dev, st.st_ino, st.st_size, st.st_mtim.tv_sec, st.st_mtim.tv_nsec}; }

// Files found sound in this process, as they were then.
std::mutex checked_mutex;
std::set<FileKey> checked_files;

}  // namespace

void trust_global_heaps(const std::string& path) {
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0) return;
  const std::lock_guard<std::mutex> lock(checked_mutex);
  checked_files.insert(key_of(st));
}

void check_global_heaps(const std::string& path) {
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) return;  // the reader that follows says why it cannot open it
  const std::unique_ptr<int, void (*)(int*)> closer(new int(fd), [](int* f) {
    ::close(*f);
    delete f;
  });
  struct stat st {};
  if (::fstat(fd, &st) != 0 || !S_ISREG(st.st_mode)) return;
  const FileKey key = key_of(st);
  {
    const std::lock_guard<std::mutex> lock(checked_mutex);
    if (checked_files.count(key)) return;
  }
  const auto file_bytes = static_cast<std::uint64_t>(st.st_size);
  constexpr std::size_t kBlock = std::size_t{8} << 20;
  std::vector<unsigned char> block(kBlock + kHeaderBytes);
  for (std::uint64_t start = 0; start < file_bytes; start += kBlock) {
    // Each block with the next one's first bytes, so that a header across the seam is seen whole.
    const std::size_t bytes = static_cast<std::size_t>(std::min<std::uint64_t>(kBlock + kHeaderBytes, file_bytes - start));
    if (!read_at(fd, start, block.data(), bytes)) return;
    const std::size_t last = std::min(bytes, kBlock);  // headers starting in this block only
    const unsigned char* const base = block.data();
    const unsigned char* const end = base + bytes;
    for (const unsigned char* s = base; s < base + last;) {
      // A match starts before `last`; its header must lie within what was read.
      const std::size_t span = static_cast<std::size_t>(std::min(base + last + 3, end) - s);
      const auto* h = static_cast<const unsigned char*>(::memmem(s, span, "GCOL", 4));
      if (!h || h + kHeaderBytes > end) break;
      s = h + 1;
      const std::uint64_t at = start + static_cast<std::uint64_t>(h - base);
      // A collection's header: version 1 and zero reserved bytes, a size
      // HDF5 allows that fits the file. Anything else is other data that
      // happens to hold these four letters.
      if (h[4] != 1 || h[5] != 0 || h[6] != 0 || h[7] != 0) continue;
      const std::uint64_t size = little_endian(h + 8, 8);
      if (size < kMinCollectionBytes || size > file_bytes - at) continue;
      if (const std::uint64_t bad = damaged_object(fd, at, size)) {
        throw InputError({path, 0, "byte " + std::to_string(bad)},
                         "the store is damaged: a variable-length text object in the HDF5 global heap collection at byte " +
                             std::to_string(at) + " claims more bytes than its collection holds; restore the store from a copy or "
                             "run the study again into a new store");
      }
    }
  }
  const std::lock_guard<std::mutex> lock(checked_mutex);
  checked_files.insert(key);
}

}  // namespace gazemill
