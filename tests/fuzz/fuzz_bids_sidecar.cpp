// Coverage-guided fuzzing of the BIDS physio sidecar reader (libFuzzer,
// clang only; built by scripts/fuzz). Any JSON text must give a sidecar or an
// InputError; a crash, a sanitizer report or any other exception is a bug.
// Seeds are in tests/fuzz/seeds/bids.

#include <unistd.h>

#include <cstdint>
#include <cstdlib>
#include <fstream>
#include <string>

#include "io/bids_reader.h"
#include "pipeline/input_error.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const std::string path = [] {
    const char* dir = std::getenv("TMPDIR");
    return std::string(dir ? dir : "/tmp") + "/gazemill-fuzz-" + std::to_string(::getpid()) + "_physio.json";
  }();
  {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
  }
  try {
    (void)gazemill::read_bids_physio_sidecar(path);
  } catch (const gazemill::InputError&) {
    // The expected outcome for bad text; anything else escapes to libFuzzer.
  }
  return 0;
}
