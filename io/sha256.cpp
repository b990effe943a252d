#include "io/sha256.h"

#include <fcntl.h>
#include <openssl/evp.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>

#include <cerrno>
#include <cstring>
#include <stdexcept>

#include "io/mapped_window.h"
#include "pipeline/input_error.h"

namespace gazemill {

struct Sha256::Context {
  EVP_MD_CTX* md = nullptr;
  ~Context() { EVP_MD_CTX_free(md); }
};

Sha256::Sha256() : ctx_(std::make_unique<Context>()) {
  ctx_->md = EVP_MD_CTX_new();
  if (!ctx_->md || EVP_DigestInit_ex(ctx_->md, EVP_sha256(), nullptr) != 1) throw std::runtime_error("SHA-256 unavailable");
}

Sha256::~Sha256() = default;

void Sha256::update(const void* data, std::size_t size) { EVP_DigestUpdate(ctx_->md, data, size); }

std::string Sha256::hex_digest() {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int len = 0;
  EVP_DigestFinal_ex(ctx_->md, digest, &len);
  static const char* hex = "0123456789abcdef";
  std::string out;
  for (unsigned i = 0; i < len; ++i) {
    out += hex[digest[i] >> 4];
    out += hex[digest[i] & 0xf];
  }
  return out;
}

std::string sha256_hex(std::string_view text) {
  Sha256 h;
  h.update(text);
  return h.hex_digest();
}

std::string sha256_file(const std::string& path) {
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) throw InputError({path, 0, ""}, std::string("cannot open file to hash it: ") + std::strerror(errno));
  const std::unique_ptr<int, void (*)(int*)> closer(new int(fd), [](int* f) { ::close(*f); delete f; });
  struct stat st {};
  Sha256 h;
  // A regular file is hashed through windows of mapped pages: no copy into a
  // buffer, which on a large input is a good part of the hashing time. Each
  // window is unmapped before the next, so memory stays small.
  if (::fstat(fd, &st) == 0 && S_ISREG(st.st_mode)) {
    constexpr std::size_t kWindow = std::size_t{8} << 20;  // a whole number of pages
    const auto size = static_cast<std::uint64_t>(st.st_size);
    std::uint64_t offset = 0;
    while (offset < size) {
      const auto w = MappedWindow::map(fd, offset, static_cast<std::size_t>(std::min<std::uint64_t>(kWindow, size - offset)));
      if (!w) break;  // finish with read() below
      // Mapped pages past the file's end would stop the program (SIGBUS).
      struct stat now {};
      if (::fstat(fd, &now) != 0 || static_cast<std::uint64_t>(now.st_size) < offset + w->size()) {
        throw InputError({path, 0, ""}, "the file changed size while it was being hashed");
      }
      h.update(w->data(), w->size());
      offset += w->size();
    }
    if (offset == size) return h.hex_digest();
    if (::lseek(fd, static_cast<off_t>(offset), SEEK_SET) < 0) throw InputError({path, 0, ""}, "cannot seek while hashing");
  }
  std::unique_ptr<char[]> buf(new char[1 << 20]);
  for (;;) {
    const ssize_t n = ::read(fd, buf.get(), 1 << 20);
    if (n == 0) break;
    if (n < 0) {
      if (errno == EINTR) continue;
      throw InputError({path, 0, ""}, std::string("read error while hashing: ") + std::strerror(errno));
    }
    h.update(buf.get(), static_cast<std::size_t>(n));
  }
  return h.hex_digest();
}

}  // namespace gazemill
