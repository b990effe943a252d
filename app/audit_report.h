#pragma once
// audit: the ledger as a readable table.

#include <ostream>
#include <string>

#include "pipeline/audit.h"

namespace gazemill {

/// One row per rule and level it removed at: removed in protocol order
/// (sequential), removed by the rule alone, % of the input at that level, and
/// the sequential count per condition; then the input and what is kept.
/// With `by_participant`, the same table for each participant.
void print_audit(const AuditReport& report, bool by_participant, std::ostream& out);

}  // namespace gazemill
