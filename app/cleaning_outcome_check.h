#pragma once
// Checks what cleaning left before anything is written. Rules that keep no
// trial at all are almost always a mistake (a threshold in the wrong unit, a
// marker the trials lack): exit 0 with header-only tables would pass it on
// to the statistics unseen.

#include "pipeline/audit.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// Throws InputError naming the protocol and, rule by rule, what each removed
/// when the rules keep no trial or no fixation of a study that had some.
/// Warns when they remove more than half of the trials or the fixations.
void check_cleaning_outcome(const Protocol& protocol, const AuditReport& audit);

}  // namespace gazemill
