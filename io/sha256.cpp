#include "io/sha256.h"

#include <openssl/evp.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <stdexcept>

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
  std::unique_ptr<FILE, int (*)(FILE*)> f(std::fopen(path.c_str(), "rb"), &std::fclose);
  if (!f) throw InputError({path, 0, ""}, std::string("cannot open file to hash it: ") + std::strerror(errno));
  Sha256 h;
  std::unique_ptr<char[]> buf(new char[1 << 20]);
  std::size_t n;
  while ((n = std::fread(buf.get(), 1, 1 << 20, f.get())) > 0) h.update(buf.get(), n);
  if (std::ferror(f.get())) throw InputError({path, 0, ""}, "read error while hashing");
  return h.hex_digest();
}

}  // namespace gazemill
