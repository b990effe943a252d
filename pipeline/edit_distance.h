#pragma once
// How far apart two names are, for "did you mean" in messages.

#include <cstddef>
#include <string>
#include <vector>

namespace gazemill {

/// Levenshtein distance: the fewest single-character insertions, deletions
/// and replacements that turn `a` into `b`.
std::size_t edit_distance(const std::string& a, const std::string& b);

/// Of `names`, the one `word` most likely misspells: at most two edits away,
/// or `word` with the unit its name lacks ("sample_rate" for
/// "sample_rate_hz"); empty when none is.
std::string likely_meant(const std::string& word, const std::vector<std::string>& names);

}  // namespace gazemill
