// Compressed chunks as the store writes them directly: HDF5's shuffle filter
// (byte b of element i goes to position b * n + i; bytes past the last whole
// element stay in place, HDF5 documentation of H5Pset_shuffle, from memory)
// followed by the zlib format. The reference decoder is zlib's own
// uncompress (Debian's zlib1g); every level must decode to the shuffled input.

#include <gtest/gtest.h>
#include <zlib.h>

#include <cstdint>
#include <cstring>
#include <random>
#include <string>
#include <vector>

#include "io/chunk_compressor.h"

using namespace gazemill;

namespace {

std::vector<char> shuffled(const std::vector<char>& data, std::size_t element_size) {
  std::vector<char> out = data;
  const std::size_t n = data.size() / element_size;
  if (element_size < 2 || n < 2) return out;
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t b = 0; b < element_size; ++b) out[b * n + i] = data[i * element_size + b];
  }
  return out;
}

std::vector<char> inflated(const std::vector<char>& packed, std::size_t size) {
  std::vector<char> out(size + 1);
  uLongf length = static_cast<uLongf>(out.size());
  const int rc = uncompress(reinterpret_cast<Bytef*>(out.data()), &length, reinterpret_cast<const Bytef*>(packed.data()),
                            static_cast<uLong>(packed.size()));
  EXPECT_EQ(rc, Z_OK);
  out.resize(length);
  return out;
}

}  // namespace

TEST(ChunkCompressor, ZlibDecodesEveryLevelToTheShuffledInput) {
  std::mt19937_64 rng(3);
  std::vector<std::pair<std::string, std::vector<char>>> inputs;
  {  // a sample clock at 1000 Hz: int64 microseconds
    std::vector<std::int64_t> t(65536);
    for (std::size_t i = 0; i < t.size(); ++i) t[i] = 123456789 + 1000 * static_cast<std::int64_t>(i);
    inputs.emplace_back("time", std::vector<char>(reinterpret_cast<char*>(t.data()), reinterpret_cast<char*>(t.data() + t.size())));
  }
  {  // gaze in pixels with noise
    std::normal_distribution<float> noise(0.0f, 0.4f);
    std::vector<float> x(65536);
    for (std::size_t i = 0; i < x.size(); ++i) x[i] = 512.0f + static_cast<float>(i / 250) + noise(rng);
    inputs.emplace_back("gaze", std::vector<char>(reinterpret_cast<char*>(x.data()), reinterpret_cast<char*>(x.data() + x.size())));
  }
  {  // bytes that do not compress at all
    std::vector<char> r(200000);
    for (auto& c : r) c = static_cast<char>(rng());
    inputs.emplace_back("random", r);
  }
  inputs.emplace_back("one byte", std::vector<char>{7});
  inputs.emplace_back("odd length", std::vector<char>{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19});

  for (const auto& [name, data] : inputs) {
    for (std::size_t element_size : {1, 2, 4, 8}) {
      const std::vector<char> want = shuffled(data, element_size);
      for (int level : {1, 4, 6}) {
        const std::vector<char> packed = shuffle_and_deflate(data.data(), data.size(), element_size, level);
        EXPECT_EQ(inflated(packed, data.size()), want) << name << ", " << element_size << "-byte elements, level " << level;
      }
    }
  }
  // The sample clock compresses at the fastest level too.
  const auto& clock = inputs.front().second;
  EXPECT_LT(shuffle_and_deflate(clock.data(), clock.size(), 8, 1).size(), clock.size() / 20);
}
