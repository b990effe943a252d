#pragma once
// How far apart two names are, for "did you mean" in messages.

#include <cstddef>
#include <string>

namespace gazemill {

/// Levenshtein distance: the fewest single-character insertions, deletions
/// and replacements that turn `a` into `b`.
std::size_t edit_distance(const std::string& a, const std::string& b);

}  // namespace gazemill
