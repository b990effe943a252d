#include "app/preflight.h"

#include <fcntl.h>
#include <sys/statvfs.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <filesystem>

#include <spdlog/spdlog.h>

#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

std::string megabytes(std::uint64_t bytes) {
  char text[32];
  std::snprintf(text, sizeof text, "%.1f MB", static_cast<double>(bytes) / 1e6);
  return text;
}

}  // namespace

SpaceVerdict judge_free_space(std::uint64_t free_bytes, std::uint64_t needed_bytes) {
  if (free_bytes < needed_bytes / 2) return SpaceVerdict::too_little;
  if (free_bytes < needed_bytes) return SpaceVerdict::tight;
  return SpaceVerdict::enough;
}

std::uint64_t estimated_store_bytes(std::uint64_t plain_input_bytes, std::uint64_t gzip_input_bytes) {
  return plain_input_bytes / 4 + gzip_input_bytes;
}

void check_store_folder(const std::string& store_path) {
  const fs::path store(store_path);
  std::error_code ec;
  if (fs::is_directory(store, ec)) {
    throw InputError({store_path, 0, ""}, "is a folder; name the store file to write, e.g. " + (store / "study.gzm.h5").string());
  }
  const fs::path folder = store.has_parent_path() ? store.parent_path() : fs::path(".");
  if (!fs::is_directory(folder, ec)) {
    throw InputError({store_path, 0, ""}, "the folder " + folder.string() + " does not exist" +
                                              (fs::exists(folder, ec) ? " (it is a file)" : ""));
  }
  // Writing a file is the only test that holds for every reason (permissions,
  // a read-only file system, root): access() says yes to root everywhere.
  const fs::path probe = folder / ("." + store.filename().string() + ".preflight-" + std::to_string(::getpid()));
  const int fd = ::open(probe.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0600);
  if (fd < 0) {
    const int err = errno;
    throw InputError({store_path, 0, ""}, "cannot write in the folder " + folder.string() + ": " + std::strerror(err));
  }
  ::close(fd);
  ::unlink(probe.c_str());
}

void check_free_space(const std::string& store_path, std::uint64_t needed_bytes) {
  const fs::path store(store_path);
  const fs::path folder = fs::absolute(store.has_parent_path() ? store.parent_path() : fs::path("."));
  struct statvfs st {};
  if (::statvfs(folder.c_str(), &st) != 0) return;  // no figure to judge by; the writes will tell
  const std::uint64_t free_bytes = static_cast<std::uint64_t>(st.f_bavail) * st.f_frsize;
  switch (judge_free_space(free_bytes, needed_bytes)) {
    case SpaceVerdict::too_little:
      throw InputError({store_path, 0, ""}, "not enough free space in " + folder.string() + ": " + megabytes(free_bytes) +
                                                " free, and the run needs about " + megabytes(needed_bytes) +
                                                " (estimated from the inputs' sizes); free some space or write the store elsewhere (-o)");
    case SpaceVerdict::tight:
      spdlog::warn("{}: only {} free in {}, and the run may need about {} (estimated from the inputs' sizes)", store_path,
                   megabytes(free_bytes), folder.string(), megabytes(needed_bytes));
      break;
    case SpaceVerdict::enough: break;
  }
}

}  // namespace gazemill
