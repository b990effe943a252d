#include "io/atomic_file.h"

#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>

#include "pipeline/input_error.h"

namespace gazemill {

std::string temporary_path_beside(const std::string& path) {
  const std::filesystem::path p(path);
  return (p.parent_path() / ("." + p.filename().string() + ".partial-" + std::to_string(::getpid()))).string();
}

void write_file_atomically(const std::string& path, const std::string& text) {
  const std::string tmp = temporary_path_beside(path);
  {
    errno = 0;
    std::ofstream out(tmp, std::ios::binary);
    out << text;
    out.flush();
    if (!out) {
      const std::string why = errno ? std::strerror(errno) : "the write failed";
      out.close();
      std::remove(tmp.c_str());
      throw InputError({path, 0, ""}, "cannot write: " + why);
    }
  }
  std::error_code ec;
  std::filesystem::rename(tmp, path, ec);
  if (ec) {
    std::remove(tmp.c_str());
    throw InputError({path, 0, ""}, "cannot move into place: " + ec.message());
  }
}

}  // namespace gazemill
