// The global heap walk (io/global_heap_check) against collections laid out
// by hand as the HDF5 File Format Specification (version 2 and later,
// section "Global Heap") describes them: "GCOL", version 1, three reserved
// bytes, the collection's size (8 bytes), then objects of index (2),
// reference count (2), reserved (4), size (8) and data padded to 8 bytes,
// object 0 being the free space. The whole-store cases, with the input
// scripts/fuzz found, are in tests/hardening/check_damaged_stores.py.
#include <gtest/gtest.h>

#include <cstdint>
#include <fstream>
#include <string>

#include "io/global_heap_check.h"
#include "pipeline/input_error.h"
#include "test_support.h"

using namespace gazemill;
using namespace gazemill::test_support;

namespace {

void put(std::string& b, std::uint64_t v, int bytes) {
  for (int i = 0; i < bytes; ++i) b.push_back(static_cast<char>((v >> (8 * i)) & 0xff));
}

// A 4096-byte collection holding one 5-byte string object (index 1), padded
// to 8, then the free space as object 0 covering the rest; `claimed` is the
// size the string object says it has.
std::string collection(std::uint64_t claimed) {
  std::string c = "GCOL";
  put(c, 1, 1);
  put(c, 0, 3);
  put(c, 4096, 8);
  put(c, 1, 2);
  put(c, 1, 2);
  put(c, 0, 4);
  put(c, claimed, 8);
  c += "hello";
  c.append(3, '\0');
  const std::uint64_t free_bytes = 4096 - c.size();
  put(c, 0, 2);
  put(c, 0, 2);
  put(c, 0, 4);
  put(c, free_bytes, 8);
  c.resize(4096, '\0');
  return c;
}

std::string file_with(const TempDir& d, const std::string& name, const std::string& body) {
  const std::string path = d.file(name);
  std::ofstream(path, std::ios::binary) << std::string(512, 'x') << body << std::string(100, 'y');
  return path;
}

TEST(GlobalHeapCheck, SoundCollectionPasses) {
  TempDir d;
  EXPECT_NO_THROW(check_global_heaps(file_with(d, "sound.h5", collection(5))));
}

TEST(GlobalHeapCheck, ObjectLongerThanItsCollectionIsDamage) {
  TempDir d;
  for (std::uint64_t claimed : {std::uint64_t{4096}, std::uint64_t{1} << 40, ~std::uint64_t{0}}) {
    const std::string path = file_with(d, "long-" + std::to_string(claimed) + ".h5", collection(claimed));
    try {
      check_global_heaps(path);
      ADD_FAILURE() << "claimed " << claimed << " bytes in a 4096-byte collection";
    } catch (const InputError& e) {
      const std::string what = e.what();
      EXPECT_NE(what.find(path), std::string::npos) << what;
      EXPECT_NE(what.find("byte 528"), std::string::npos) << what;  // the object's header: 512 + 16
    }
  }
  // The largest size that still fits: 4096 - 16 (collection header) - 16 (object header), padded.
  EXPECT_NO_THROW(check_global_heaps(file_with(d, "fits.h5", collection(4064))));
  EXPECT_THROW(check_global_heaps(file_with(d, "one-over.h5", collection(4065))), InputError);
}

// The four letters elsewhere (data that happens to hold them, a header with
// another version, a size the file cannot hold) are not collections.
TEST(GlobalHeapCheck, OtherBytesSpellingGcolAreNotCollections) {
  TempDir d;
  std::string odd = "GCOL";
  put(odd, 2, 1);  // no such version
  put(odd, 0, 3);
  put(odd, 4096, 8);
  std::string huge = "GCOL";
  put(huge, 1, 1);
  put(huge, 0, 3);
  put(huge, std::uint64_t{1} << 50, 8);
  EXPECT_NO_THROW(check_global_heaps(file_with(d, "odd.h5", odd + std::string(5000, 'z') + huge + "GCOL")));
}

// A collection across the seam of the 8 MiB blocks the file is read in is still walked.
TEST(GlobalHeapCheck, CollectionAcrossABlockSeamIsWalked) {
  TempDir d;
  const std::string path = d.file("seam.h5");
  std::ofstream(path, std::ios::binary) << std::string((std::size_t{8} << 20) - 6, 'x') << collection(1u << 30) << "tail";
  EXPECT_THROW(check_global_heaps(path), InputError);
}

}  // namespace
