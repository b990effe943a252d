#include "app/temp_folder.h"

#include <signal.h>
#include <unistd.h>

#include <cerrno>
#include <random>

namespace gazemill {

namespace fs = std::filesystem;

TempFolder::TempFolder(const std::string& prefix) {
  // Folders of this kind that a killed process left (its id no longer runs) go first.
  std::error_code ec;
  for (const auto& e : fs::directory_iterator(fs::temp_directory_path(), ec)) {
    const std::string name = e.path().filename().string();
    if (name.rfind(prefix, 0) != 0) continue;
    const auto dash = name.find('-', prefix.size());
    const std::string pid = name.substr(prefix.size(), dash == std::string::npos ? std::string::npos : dash - prefix.size());
    if (pid.empty() || pid.find_first_not_of("0123456789") != std::string::npos) continue;
    if (::kill(static_cast<pid_t>(std::stol(pid)), 0) == 0 || errno == EPERM) continue;
    fs::remove_all(e.path(), ec);
  }
  std::random_device rd;
  path_ = fs::temp_directory_path() / (prefix + std::to_string(::getpid()) + "-" + std::to_string(rd()));
  fs::create_directories(path_);
}

TempFolder::~TempFolder() {
  std::error_code ec;
  fs::remove_all(path_, ec);
}

}  // namespace gazemill
