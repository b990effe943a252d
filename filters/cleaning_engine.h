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

/// Throws RuleParameterError for a bad rule; std::logic_error if the audit does not balance.
CleaningOutcome run_cleaning(const CleaningState& input, const std::vector<CleaningRuleSpec>& rules);

}  // namespace gazemill
