#pragma once
// Applies the protocol's cleaning rules in their written order and accounts
// for everything: sequential attribution (the first rule to remove an item),
// each rule alone on the input, the pairwise overlap of the rules alone, and
// the conservation check input = kept + removed at every level.

#include <memory>
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

}  // namespace gazemill
