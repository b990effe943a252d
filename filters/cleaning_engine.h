#pragma once
// Applies the protocol's cleaning rules in their written order and accounts
// for everything: sequential attribution (the first rule to remove an item),
// each rule alone on the input, the pairwise overlap of the rules alone, and
// the conservation check input = kept + removed at every level.

#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "filters/cleaning_rule.h"
#include "pipeline/audit.h"
#include "pipeline/cleaning_state.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// Throws RuleParameterError for a bad rule; std::logic_error if the audit
/// does not balance. Takes the input by value: the last copy the rules need
/// is the input itself, so a caller done with it moves it in.
CleaningOutcome run_cleaning(CleaningState input, const std::vector<CleaningRuleSpec>& rules);

/// The rules participant by participant. Every rule judges a participant's
/// items by that participant's own trials alone, so the outcomes of states of
/// one participant each are the whole study's outcome in parts (ids as the
/// states give them), while only one participant's copies are held at a
/// time. `next` fills the next participant's state and returns false when
/// none is left; `each` takes that participant's outcome. Returns the
/// study's audit (of no participant: the rules with nothing removed).
AuditReport run_cleaning_by_participant(const std::function<bool(CleaningState&)>& next, const std::vector<CleaningRuleSpec>& rules,
                                        const std::vector<std::string>& factors, const std::function<void(CleaningOutcome&&)>& each);

}  // namespace gazemill
