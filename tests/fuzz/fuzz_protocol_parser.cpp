// Coverage-guided fuzzing of the protocol parser (libFuzzer, clang only;
// built by scripts/fuzz). Any text must give a protocol or an InputError; a
// crash, a sanitizer report or any other exception is a bug. The parser
// reads no other file. The seed is the demo study's protocol.

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
