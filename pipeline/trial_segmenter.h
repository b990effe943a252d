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

/// How many trials each [trials] pattern found a message in. A pattern that
/// finds none in a whole study is far more often a typo than a design, and
/// would otherwise pass unseen until a rule removes every trial.
struct TrialPatternUse {
  std::size_t trials = 0;
  std::vector<std::size_t> variable_trials;          // per variables pattern, in protocol order
  std::map<std::string, std::size_t> marker_trials;  // per marker name
  std::vector<std::string> first_trial_messages;     // to show what the messages look like
};

/// Adds the trials that have each marker of `marker_patterns` to `use.marker_trials`,
/// and the trials to `use.trials` (any trial source).
void count_marker_use(const std::vector<Trial>& trials, const std::map<std::string, std::string>& marker_patterns, TrialPatternUse& use);

class TrialSegmenter {
 public:
  /// Throws std::invalid_argument naming the pattern when one does not compile.
  TrialSegmenter(const TrialSegmentationSpec& spec, UnterminatedTrialPolicy policy);

  /// Messages must be in time order. `message_lines` (same length, or empty)
  /// gives each message's line in `source_file` for error reports.
  /// Throws InputError on a trial start without an end, an end without a start,
  /// mismatched ids or a repeated trial id (unless the policy drops them; drops
  /// are added to `repairs`). `use`, when given, receives the trials each
  /// variables pattern matched in (markers: see count_marker_use).
  std::vector<Trial> segment(const std::vector<Message>& messages,
                             const std::vector<std::size_t>& message_lines,
                             const std::string& source_file, RepairCounts& repairs,
                             TrialPatternUse* use = nullptr) const;

 private:
  NamedRegex start_;
  NamedRegex end_;
  std::vector<NamedRegex> variables_;
  std::vector<std::pair<std::string, NamedRegex>> markers_;
  UnterminatedTrialPolicy policy_;
};

}  // namespace gazemill
