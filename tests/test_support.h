#pragma once
// Helpers shared by the tests: a temporary folder that cleans itself up,
// and writing small text or gzip files into it.

#include <zlib.h>

#include <filesystem>
#include <fstream>
#include <random>
#include <string>

namespace gazemill::test_support {

class TempDir {
 public:
  TempDir() {
    std::random_device rd;
    path_ = std::filesystem::temp_directory_path() / ("gazemill-test-" + std::to_string(rd()) + std::to_string(rd()));
    std::filesystem::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  std::string file(const std::string& name) const { return (path_ / name).string(); }
  std::string write(const std::string& name, const std::string& text) const {
    const auto p = path_ / name;
    std::filesystem::create_directories(p.parent_path());
    std::ofstream(p, std::ios::binary) << text;
    return p.string();
  }
  std::string write_gz(const std::string& name, const std::string& text) const {
    const auto p = path_ / name;
    std::filesystem::create_directories(p.parent_path());
    gzFile f = gzopen(p.c_str(), "wb");
    gzwrite(f, text.data(), static_cast<unsigned>(text.size()));
    gzclose(f);
    return p.string();
  }
  const std::filesystem::path& path() const { return path_; }

 private:
  std::filesystem::path path_;
};

}  // namespace gazemill::test_support
