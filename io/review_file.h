#pragma once
// The drift-review file: tab-separated, one row per reviewed trial, with the
// columns participant, trial, decision (accept | method | shift_lines |
// offset_px | exclude), value (the method's name, or the number of lines or
// px; empty for accept and exclude), reason (required) and, optionally,
// session (which of the participant's recordings, where trial numbers
// repeat across sessions) and reviewer. Lines starting with '#' are comments.

#include <string>
#include <vector>

#include "pipeline/drift_review.h"

namespace gazemill {

/// Throws InputError naming the file, line and column of a bad row, or a
/// trial reviewed twice.
std::vector<TrialReview> read_review_file(const std::string& path);

}  // namespace gazemill
