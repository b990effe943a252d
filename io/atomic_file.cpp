#include "io/atomic_file.h"

#include <unistd.h>

#include <cstdio>
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
    std::ofstream out(tmp, std::ios::binary);
    out << text;
    out.flush();
    if (!out) {
      std::remove(tmp.c_str());
      throw InputError({path, 0, ""}, "cannot write");
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
