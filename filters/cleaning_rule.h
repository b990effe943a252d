#pragma once
// The one interface every cleaning rule implements, and the removal helpers
// that keep the audit whole: removing a trial also removes its remaining
// fixations and samples, removing a participant their remaining trials.

#include <memory>
#include <stdexcept>
#include <string>

#include "pipeline/audit.h"
#include "pipeline/cleaning_state.h"
#include "pipeline/protocol.h"

namespace gazemill {

class CleaningRule {
 public:
  virtual ~CleaningRule() = default;
  virtual AuditLevel level() const = 0;
  /// Applies the rule; reports every removal on `channel`, tagged `rule_index`.
  virtual void apply(CleaningState& state, std::size_t rule_index, AuditChannel& channel) const = 0;
};

/// A bad parameter of a rule; `key` names it (empty when no single key is at fault).
class RuleParameterError : public std::invalid_argument {
 public:
  RuleParameterError(std::string key, const std::string& what) : std::invalid_argument(what), key(std::move(key)) {}
  std::string key;
};

/// A rule that cannot apply to the data it is given (a variable that is no
/// number, a region rule without regions): which rule, for the message.
class RuleApplyError : public std::invalid_argument {
 public:
  RuleApplyError(std::size_t rule, const std::string& what) : std::invalid_argument(what), rule(rule) {}
  std::size_t rule;  // index in the protocol's rule list
};

/// Creates a rule from its spec. Throws RuleParameterError on an unknown kind,
/// a missing or unknown parameter (a parameter without its unit is named as
/// such), a negative or impossible value.
std::unique_ptr<CleaningRule> make_cleaning_rule(const CleaningRuleSpec& spec);
AuditLevel cleaning_rule_level(const std::string& kind);

// Removal helpers used by the rules.
/// Removes a kept fixation; with `merged_into`, it was merged into that one.
void remove_fixation(CleanTrial& trial, CleanFixation& f, std::size_t rule, const std::string& reason, AuditChannel& channel,
                     const CleanFixation* merged_into = nullptr);
void remove_trial(CleanTrial& trial, std::size_t rule, const std::string& reason, AuditChannel& channel);
void remove_participant(CleanParticipant& p, std::size_t rule, const std::string& reason, AuditChannel& channel);

/// Calls f(trial) for every trial still kept, of participants still kept.
template <typename F>
void for_each_kept_trial(CleaningState& state, F&& f) {
  for (auto& p : state.participants) {
    if (!p.kept) continue;
    for (auto& t : p.trials) {
      if (t.kept) f(t);
    }
  }
}

/// Calls f(trial, fixation) for every fixation still kept, in trials still kept.
template <typename F>
void for_each_kept_fixation(CleaningState& state, F&& f) {
  for_each_kept_trial(state, [&](CleanTrial& t) {
    for (auto& x : t.fixations) {
      if (x.kept) f(t, x);
    }
  });
}

}  // namespace gazemill
