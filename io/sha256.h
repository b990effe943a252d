#pragma once
// SHA-256 (FIPS 180-4) of files and text, for the provenance record of every
// input. Computed by OpenSSL's libcrypto, which uses the CPU's SHA
// instructions where present (several times faster than portable code).

#include <memory>
#include <string>
#include <string_view>

namespace gazemill {

class Sha256 {
 public:
  Sha256();
  ~Sha256();
  Sha256(const Sha256&) = delete;
  Sha256& operator=(const Sha256&) = delete;
  void update(const void* data, std::size_t size);
  void update(std::string_view text) { update(text.data(), text.size()); }
  /// Lower-case hex digest; the object must not be updated afterwards.
  std::string hex_digest();

 private:
  struct Context;
  std::unique_ptr<Context> ctx_;
};

std::string sha256_hex(std::string_view text);
/// Hashes the bytes of a file as stored on disk. Throws InputError if unreadable.
std::string sha256_file(const std::string& path);

}  // namespace gazemill
