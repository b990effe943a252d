#pragma once
// inspect: a readable overview of a study store.

#include <ostream>
#include <string>

namespace gazemill {

/// Prints one row per recording (participant, session, rate, eyes, trials,
/// samples, time span, proportion of missing samples) and the provenance.
void print_store_overview(const std::string& store_path, std::ostream& out);

}  // namespace gazemill
