#pragma once
// Reads a lab's own fixation list ([input] format = "fixations"): one
// fixation per row, with the columns the protocol maps ([input.fixations]),
// and the rows that carry a message instead. Bad cells are errors naming the
// file, line, column and what was expected.

#include <cstddef>
#include <string>
#include <vector>

#include "pipeline/events.h"
#include "pipeline/protocol.h"
#include "pipeline/recording.h"

namespace gazemill {

struct FixationListRead {
  std::vector<FixationEvent> fixations;      // in start order; trial and degrees not yet set
  std::vector<std::size_t> fixation_lines;   // the line of each, in the same order
  std::vector<Message> messages;             // in file order
  std::vector<std::size_t> message_lines;
  std::size_t other_eye_rows = 0;            // rows of the eye the protocol leaves out
  Microseconds first_us = 0, last_us = 0;    // earliest start and latest end of any row (fixation or message)
};

/// Throws InputError: a mapped column missing from the header, a time or
/// position that is no number, an end before its start, an unknown eye text.
FixationListRead read_fixation_list(const std::string& path, const FixationListSpec& spec);

}  // namespace gazemill
