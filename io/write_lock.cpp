#include "io/write_lock.h"

#include <fcntl.h>
#include <signal.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <string>

#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

std::string lock_path(const std::string& path) {
  const fs::path p = fs::path(path).lexically_normal();
  const std::string name = p.filename().empty() ? p.parent_path().filename().string() : p.filename().string();
  const fs::path dir = p.filename().empty() ? p.parent_path().parent_path() : p.parent_path();
  return (dir / ("." + name + ".lock")).string();
}

}  // namespace

WriteLock::WriteLock(const std::string& path) : path_(lock_path(path)) {
  // The holder removes the file when it lets go, so none is left beside the
  // outputs. Whoever opened it just before then locks a file that is gone: it
  // sees that the name no longer leads to its file and tries again.
  for (int attempt = 0; attempt < 100; ++attempt) {
    fd_ = ::open(path_.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
    if (fd_ < 0) {
      throw InputError({path, 0, ""}, "cannot create the lock file " + path_ + ": " + std::strerror(errno));
    }
    if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
      char pid[32] = {0};
      const ssize_t n = ::pread(fd_, pid, sizeof pid - 1, 0);
      ::close(fd_);
      fd_ = -1;
      const std::string holder = n > 0 ? std::string(pid, static_cast<std::size_t>(n)) : std::string("another process");
      throw InputError({path, 0, ""}, "another gazemill (process " + holder + ") is writing it now; wait until it has finished "
                                      "(two writers at once would lose one's work)");
    }
    struct stat held {}, named {};
    if (::fstat(fd_, &held) == 0 && ::stat(path_.c_str(), &named) == 0 && held.st_dev == named.st_dev && held.st_ino == named.st_ino) {
      const std::string me = std::to_string(::getpid());
      if (::ftruncate(fd_, 0) == 0) {
        [[maybe_unused]] const ssize_t w = ::pwrite(fd_, me.data(), me.size(), 0);
      }
      return;
    }
    ::close(fd_);
    fd_ = -1;
  }
  throw InputError({path, 0, ""}, "cannot take the lock file " + path_ + ": other writers keep replacing it");
}

WriteLock::~WriteLock() {
  if (fd_ < 0) return;
  ::unlink(path_.c_str());  // while still held, so that no one else's file is removed
  ::close(fd_);
}

int remove_leftover_temporaries(const std::string& path) {
  const fs::path p = fs::path(path).lexically_normal();
  const fs::path dir = p.parent_path().empty() ? fs::path(".") : p.parent_path();
  const std::string prefix = "." + p.filename().string() + ".partial-";
  int removed = 0;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator(dir, ec)) {
    const std::string name = entry.path().filename().string();
    if (name.rfind(prefix, 0) != 0) continue;
    const std::string pid_text = name.substr(prefix.size());
    if (pid_text.empty() || pid_text.find_first_not_of("0123456789") != std::string::npos) continue;
    const long pid = std::stol(pid_text);
    if (pid == ::getpid()) continue;
    if (::kill(static_cast<pid_t>(pid), 0) == 0 || errno == EPERM) continue;  // still alive
    std::error_code rm;
    fs::remove_all(entry.path(), rm);
    removed += !rm;
  }
  return removed;
}

}  // namespace gazemill
