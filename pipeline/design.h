#pragma once
// Design cells: the levels of the design's factors that a trial was run in,
// as audits and aggregates key and break down by them.

#include <map>
#include <string>
#include <vector>

#include "pipeline/protocol.h"

namespace gazemill {

/// A trial's levels of the design's factors, in the factors' order ("" where it has none).
std::vector<std::string> design_levels(const DesignSpec& design, const std::map<std::string, std::string>& variables);

/// One string key per cell, for maps; never empty, so that "" can stand for
/// a whole participant in the audit's totals.
std::string cell_key(const std::vector<std::string>& levels);
/// The levels of a cell key.
std::vector<std::string> cell_levels(const std::string& key);
/// "frequency=rare, preview=valid" ("all trials" without factors), for messages and the terminal.
std::string cell_text(const std::vector<std::string>& factors, const std::string& key);

}  // namespace gazemill
