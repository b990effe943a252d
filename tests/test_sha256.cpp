#include <gtest/gtest.h>

#include <cstdio>
#include <string>

#include "io/sha256.h"
#include "test_support.h"

using namespace gazemill;

// Test vectors from FIPS 180-2, Appendix B (SHA-256 examples "abc" and the
// 448-bit message), and the well-known digest of the empty string.
TEST(Sha256, PublishedTestVectors) {
  EXPECT_EQ(sha256_hex("abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  EXPECT_EQ(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  EXPECT_EQ(sha256_hex(""), "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

// Reference: coreutils sha256sum on the same bytes (a file spanning many blocks).
TEST(Sha256, FileMatchesCoreutils) {
  test_support::TempDir dir;
  std::string text;
  for (int i = 0; i < 100000; ++i) text += std::to_string(i * 7919 % 10007) + "\t";
  const std::string path = dir.write("data.txt", text);
  std::string expected;
  FILE* p = popen(("sha256sum " + path).c_str(), "r");
  ASSERT_NE(p, nullptr);
  char buf[128] = {0};
  ASSERT_NE(fgets(buf, sizeof buf, p), nullptr);
  pclose(p);
  expected.assign(buf, 64);
  EXPECT_EQ(sha256_file(path), expected);
}
