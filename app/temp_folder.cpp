#include "app/temp_folder.h"

#include <random>

namespace gazemill {

TempFolder::TempFolder(const std::string& prefix) {
  std::random_device rd;
  path_ = std::filesystem::temp_directory_path() / (prefix + std::to_string(rd()) + std::to_string(rd()));
  std::filesystem::create_directories(path_);
}

TempFolder::~TempFolder() {
  std::error_code ec;
  std::filesystem::remove_all(path_, ec);
}

}  // namespace gazemill
