// Coverage-guided fuzzing of the protocol parser (libFuzzer, clang only;
// built by scripts/fuzz). Any text must give a protocol or an InputError that
// names the file; a crash, a sanitizer report or any other exception is a
// bug. (Protocol files that name other files, such as region tables, are
// read as text too; those errors name the file read.) Seeds are the fixtures' protocol files.

#include <cstdint>
#include <string>

#include "app/protocol_parser.h"
#include "pipeline/input_error.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    (void)gazemill::parse_protocol_text(text, "/nonexistent/fuzz.toml");
  } catch (const gazemill::InputError&) {
    // The expected outcome for bad text; anything else escapes to libFuzzer.
  }
  return 0;
}
