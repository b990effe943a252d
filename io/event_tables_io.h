#pragma once
// fixations.tsv, saccades.tsv and blinks.tsv: one row per event with its
// trial's identity and variables (participant, session, trial, item, the
// design's factors, the other variables by name), times from the trial's
// start (ms) and on the recording's clock (us), NA where undefined.

#include <string>

#include "pipeline/event_table.h"
#include "pipeline/protocol.h"

namespace gazemill {

std::string fixations_tsv(const EventTables& tables, const DesignSpec& design);
std::string saccades_tsv(const EventTables& tables, const DesignSpec& design);
std::string blinks_tsv(const EventTables& tables, const DesignSpec& design);

}  // namespace gazemill
