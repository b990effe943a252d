#pragma once
// Reads a protocol file (TOML, gazemill.toml by convention) into the
// protocol model. Unknown keys, wrong types and impossible values are
// InputErrors naming the file, line and dotted key.

#include <optional>
#include <string>

#include "pipeline/protocol.h"

namespace gazemill {

Protocol parse_protocol_file(const std::string& path);

/// The protocol file's text as it is now, or nothing when it cannot be read
/// (to tell whether it changed since a stage ran with it).
std::optional<std::string> protocol_file_text(const std::string& path);

/// "tab", "comma", "semicolon", "space" or a single character (not a quote or
/// line break) as the delimiter it names; nullopt otherwise.
std::optional<char> delimiter_named(const std::string& name);
/// Parses protocol text; `path` is used in messages and to resolve relative globs.
Protocol parse_protocol_text(const std::string& text, const std::string& path);

}  // namespace gazemill
