// Coverage-guided fuzzing of the region file readers (libFuzzer, clang only;
// built by scripts/fuzz). The first byte chooses a boxes file or an items
// file laid out with default font metrics; the rest is the file. Any input
// must give regions or an InputError; a crash, a sanitizer report or any
// other exception is a bug. Seeds (tests/fuzz/seeds/regions) are the first
// rows of the demo study's region files.

#include <unistd.h>

#include <cstdint>
#include <cstdlib>
#include <fstream>
#include <string>

#include "io/region_files.h"
#include "pipeline/input_error.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 1) return 0;
  static const std::string path = [] {
    const char* dir = std::getenv("TMPDIR");
    return std::string(dir ? dir : "/tmp") + "/gazemill-fuzz-" + std::to_string(::getpid()) + "-regions.tsv";
  }();
  {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out.write(reinterpret_cast<const char*>(data + 1), static_cast<std::streamsize>(size - 1));
  }
  try {
    // "condition" is the design factor the seeds' files have a column for.
    if (data[0] & 1) (void)gazemill::read_items_file(path, gazemill::TextLayoutSpec{}, {"condition"});
    else (void)gazemill::read_region_boxes(path, 12.0, {"condition"});
  } catch (const gazemill::InputError&) {
    // The expected outcome for bad text; anything else escapes to libFuzzer.
  }
  return 0;
}
