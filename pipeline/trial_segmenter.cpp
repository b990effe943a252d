#include "pipeline/trial_segmenter.h"

#include <algorithm>
#include <optional>
#include <set>
#include <stdexcept>

#include "pipeline/input_error.h"

namespace gazemill {
namespace {

NamedRegex compile(const std::string& pattern, const std::string& key) {
  try {
    return NamedRegex(pattern);
  } catch (const std::invalid_argument& e) {
    throw std::invalid_argument("protocol key " + key + ": " + e.what());
  }
}

}  // namespace

TrialSegmenter::TrialSegmenter(const TrialSegmentationSpec& spec, UnterminatedTrialPolicy policy)
    : start_(compile(spec.start_pattern, "trials.start")),
      end_(compile(spec.end_pattern, "trials.end")),
      policy_(policy) {
  for (const auto& p : spec.variable_patterns) variables_.push_back(compile(p, "trials.variables"));
  for (const auto& [name, p] : spec.marker_patterns) markers_.emplace_back(name, compile(p, "trials.markers." + name));
}

std::vector<Trial> TrialSegmenter::segment(const std::vector<Message>& messages,
                                           const std::vector<std::size_t>& message_lines,
                                           const std::string& source_file, RepairCounts& repairs,
                                           TrialPatternUse* use) const {
  auto line_of = [&](std::size_t i) { return i < message_lines.size() ? message_lines[i] : 0; };
  auto fail = [&](std::size_t i, const std::string& what) {
    throw InputError({source_file, line_of(i), "message"}, what);
  };

  std::vector<Trial> trials;
  std::set<std::string> seen_ids;
  std::optional<Trial> open;
  std::size_t open_index = 0;

  auto set_captures = [](Trial& t, const std::map<std::string, std::string>& caps) {
    for (const auto& [name, value] : caps) {
      if (name != "trial") t.variables[name] = value;
    }
  };
  std::vector<char> variable_matched(variables_.size(), 0);  // in the open trial
  if (use) use->variable_trials.resize(variables_.size(), 0);
  auto absorb = [&](Trial& t, const Message& m) {
    for (std::size_t k = 0; k < variables_.size(); ++k) {
      if (auto caps = variables_[k].search(m.text)) {
        set_captures(t, *caps);
        variable_matched[k] = 1;
      }
    }
    for (const auto& [name, re] : markers_) {
      if (!t.markers.count(name) && re.search(m.text)) t.markers[name] = m.time_us;
    }
  };

  // A message too long to match safely is an error of its line.
  std::size_t i = 0;
  try {
    for (; i < messages.size(); ++i) {
      const Message& m = messages[i];
      if (auto caps = start_.search(m.text)) {
        if (open) {
          if (policy_ == UnterminatedTrialPolicy::drop) {
            ++repairs["unterminated_trial_dropped"];
          } else {
            fail(open_index, "trial '" + open->id + "' starts here but has no end message before the next trial starts (line " +
                                 std::to_string(line_of(i)) + "); expected a message matching trials.end");
          }
        }
        open = Trial{};
        open_index = i;
        std::fill(variable_matched.begin(), variable_matched.end(), 0);
        auto id = caps->find("trial");
        open->id = id != caps->end() ? id->second : std::to_string(trials.size() + 1);
        open->start_us = m.time_us;
        set_captures(*open, *caps);
        absorb(*open, m);
        continue;
      }
      if (auto caps = end_.search(m.text)) {
        if (!open) {
          if (policy_ == UnterminatedTrialPolicy::drop) {
            ++repairs["trial_end_without_start_dropped"];
            continue;
          }
          fail(i, "trial end message without a preceding trial start; expected a message matching trials.start first");
        }
        auto id = caps->find("trial");
        if (id != caps->end() && id->second != open->id) {
          fail(i, "trial end names trial '" + id->second + "' but the open trial is '" + open->id + "'");
        }
        set_captures(*open, *caps);
        absorb(*open, m);
        open->end_us = m.time_us;
        if (!seen_ids.insert(open->id).second) {
          fail(open_index, "trial id '" + open->id + "' appears more than once; trial ids must be unique within a recording");
        }
        if (use) {
          for (std::size_t k = 0; k < variable_matched.size(); ++k) use->variable_trials[k] += variable_matched[k];
          if (trials.empty()) {
            for (std::size_t j = open_index; j <= i; ++j) use->first_trial_messages.push_back(messages[j].text);
          }
        }
        trials.push_back(std::move(*open));
        open.reset();
        continue;
      }
      if (open) absorb(*open, m);
    }
  } catch (const std::length_error& e) {
    fail(i, e.what());
  }
  if (open) {
    if (policy_ == UnterminatedTrialPolicy::drop) {
      ++repairs["unterminated_trial_dropped"];
    } else {
      fail(open_index, "trial '" + open->id + "' starts here but the recording ends without its end message; expected a message matching trials.end");
    }
  }
  return trials;
}

void count_marker_use(const std::vector<Trial>& trials, const std::map<std::string, std::string>& marker_patterns, TrialPatternUse& use) {
  use.trials += trials.size();
  for (const auto& [name, pattern] : marker_patterns) {
    std::size_t& n = use.marker_trials[name];
    for (const auto& t : trials) n += t.markers.count(name);
  }
}

}  // namespace gazemill
