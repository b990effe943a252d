#include "app/trial_pattern_check.h"

#include <spdlog/spdlog.h>

#include "pipeline/input_error.h"

namespace gazemill {
namespace {

// What the first trial's messages look like, to set a misspelt pattern beside.
std::string example_messages(const std::vector<std::pair<std::string, const TrialPatternUse*>>& read) {
  for (const auto& [id, use] : read) {
    if (use->first_trial_messages.empty()) continue;
    std::string text = " The messages of " + id + "'s first trial are:";
    std::size_t shown = 0;
    for (const auto& m : use->first_trial_messages) {
      if (shown++ == 8) {
        text += " ...";
        break;
      }
      text += " \"" + (m.size() > 60 ? m.substr(0, 57) + "..." : m) + "\"";
    }
    return text;
  }
  return "";
}

}  // namespace

void check_trial_patterns(const Protocol& protocol, const std::vector<std::pair<std::string, const TrialPatternUse*>>& read, bool whole_study) {
  if (read.empty()) return;
  std::size_t trials = 0;
  for (const auto& [id, use] : read) trials += use->trials;
  if (trials == 0) return;  // nothing to find a message in; ingest said so per recording
  const std::string where = std::to_string(trials) + " trials of the " + std::to_string(read.size()) + " recording" +
                            (read.size() == 1 ? "" : "s") + " read";
  auto none_found = [&](std::size_t line, const std::string& key, const std::string& what) {
    const std::string problem = what + " matches no message in any of the " + where + "; is it spelt as the recordings spell it?";
    if (whole_study) throw InputError({protocol.path, line, key}, problem + example_messages(read));
    spdlog::warn("{}:{}: {}: {}", protocol.path, line, key, problem);
  };

  const TrialSegmentationSpec& spec = protocol.trials;
  for (const auto& [name, pattern] : spec.marker_patterns) {
    const auto line = spec.marker_lines.count(name) ? spec.marker_lines.at(name) : 0;
    std::size_t found = 0;
    for (const auto& [id, use] : read) {
      const auto n = use->marker_trials.find(name);
      found += n == use->marker_trials.end() ? 0 : n->second;
    }
    if (found == 0) {
      none_found(line, "trials.markers." + name, "the marker pattern \"" + pattern + "\"");
      continue;
    }
    for (const auto& [id, use] : read) {
      const auto n = use->marker_trials.find(name);
      if (use->trials > 0 && (n == use->marker_trials.end() || n->second == 0)) {
        spdlog::warn("{}: the marker {} (\"{}\") is in none of its {} trials, but in {} trials of other recordings; a rule anchored on it would "
                     "remove all of this recording's trials",
                     id, name, pattern, use->trials, found);
      }
    }
  }
  if (spec.source != TrialSource::messages) return;
  for (std::size_t k = 0; k < spec.variable_patterns.size(); ++k) {
    std::size_t found = 0;
    for (const auto& [id, use] : read) found += k < use->variable_trials.size() ? use->variable_trials[k] : 0;
    if (found == 0) none_found(spec.variables_line, "trials.variables", "the variables pattern \"" + spec.variable_patterns[k] + "\"");
  }
}

}  // namespace gazemill
