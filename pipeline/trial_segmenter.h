#pragma once
// Cuts a recording's message stream into trials.

#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "pipeline/named_regex.h"
#include "pipeline/protocol.h"
#include "pipeline/recording.h"

namespace gazemill {

/// Counts of what ingest repaired rather than rejected, by kind.
using RepairCounts = std::map<std::string, std::uint64_t>;

class TrialSegmenter {
 public:
  /// Throws std::invalid_argument naming the pattern when one does not compile.
  TrialSegmenter(const TrialSegmentationSpec& spec, UnterminatedTrialPolicy policy);

  /// Messages must be in time order. `message_lines` (same length, or empty)
  /// gives each message's line in `source_file` for error reports.
  /// Throws InputError on a trial start without an end, an end without a start,
  /// mismatched ids or a repeated trial id (unless the policy drops them; drops
  /// are added to `repairs`).
  std::vector<Trial> segment(const std::vector<Message>& messages,
                             const std::vector<std::size_t>& message_lines,
                             const std::string& source_file, RepairCounts& repairs) const;

 private:
  NamedRegex start_;
  NamedRegex end_;
  std::vector<NamedRegex> variables_;
  std::vector<std::pair<std::string, NamedRegex>> markers_;
  UnterminatedTrialPolicy policy_;
};

}  // namespace gazemill
