#pragma once
// A private temporary folder for a command's intermediate files (score's and
// verify's scratch stores), removed with everything in it when it goes.

#include <filesystem>
#include <string>

namespace gazemill {

class TempFolder {
 public:
  explicit TempFolder(const std::string& prefix);
  ~TempFolder();
  TempFolder(const TempFolder&) = delete;
  TempFolder& operator=(const TempFolder&) = delete;
  const std::filesystem::path& path() const { return path_; }

 private:
  std::filesystem::path path_;
};

}  // namespace gazemill
