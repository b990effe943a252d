#pragma once
// verify: re-runs the protocol stored in a store against the recorded input
// files (their SHA-256 checked first) and compares every dataset.

#include <ostream>
#include <string>

namespace gazemill {

/// Prints what it checked and what differs; returns true when everything matches.
bool verify_store(const std::string& store_path, std::ostream& out);

}  // namespace gazemill
