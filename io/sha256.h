#pragma once
// SHA-256 (FIPS 180-4) of files, for the provenance record of every input.

#include <array>
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

namespace gazemill {

class Sha256 {
 public:
  Sha256();
  void update(const void* data, std::size_t size);
  void update(std::string_view text) { update(text.data(), text.size()); }
  /// Lower-case hex digest; the object must not be updated afterwards.
  std::string hex_digest();

 private:
  void block(const std::uint8_t* p);
  std::array<std::uint32_t, 8> h_;
  std::array<std::uint8_t, 64> buf_{};
  std::size_t buf_len_ = 0;
  std::uint64_t total_ = 0;
};

std::string sha256_hex(std::string_view text);
/// Hashes the bytes of a file as stored on disk. Throws InputError if unreadable.
std::string sha256_file(const std::string& path);

}  // namespace gazemill
