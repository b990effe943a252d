#pragma once
// The event tables of a store: every detected fixation with what cleaning,
// drift correction and region mapping made of it, and every saccade and blink.

#include "pipeline/event_table.h"
#include "pipeline/protocol.h"

namespace gazemill {

class StudyStoreReader;
class RegionCatalogue;

/// Needs detected events; cleaning, line assignments and regions add their
/// columns where the store has them current (`regions` may be null).
EventTables event_tables(const StudyStoreReader& store, const Protocol& protocol, const RegionCatalogue* regions, bool cleaned, bool aligned);

}  // namespace gazemill
