#pragma once
// Creates drift-correction methods by name; the one place that knows every
// method and its parameter names.

#include <map>
#include <memory>
#include <string>
#include <vector>

#include "alignment/drift_corrector.h"

namespace gazemill {

/// The method the pipeline uses when the protocol names none: the majority
/// of default_majority_members. On a one-line text every method keeps every
/// fixation on that line, so the default changes nothing there.
inline constexpr const char* kDefaultDriftMethod = "majority";

/// Every name make_drift_corrector knows, the single methods in alphabetical
/// order and then "majority".
std::vector<std::string> drift_method_names();

/// The members of "majority" when no others are given, in tie order: warp,
/// segment, cluster, regress, chain (our choice). Each distortion of Carr et
/// al. (2022) defeats some methods and not others; these five are chosen so
/// that at least three survive each one on simulated passages (bench/align):
/// noise (warp, segment, chain), slope (warp, segment, regress), shift and
/// offset (warp, segment, cluster), between-line regressions (cluster,
/// regress, chain). warp comes first, for ties, as Carr et al.'s most
/// promising method.
std::vector<std::string> default_majority_members();

/// A method by name with parameters by name (units in the names; every value
/// finite). "majority" takes its members' parameters as "<member>.<name>".
/// Throws std::invalid_argument naming an unknown method (and the known
/// ones), an unknown parameter (and the method's), or an impossible value.
std::unique_ptr<DriftCorrector> make_drift_corrector(const std::string& name, const std::map<std::string, double>& params = {});

/// A majority of the named members (each a single method, in tie order),
/// with their parameters as "<member>.<name>". Throws like make_drift_corrector.
std::unique_ptr<DriftCorrector> make_majority_corrector(const std::vector<std::string>& members,
                                                        const std::map<std::string, double>& params = {});

}  // namespace gazemill
