#pragma once
// The one interface every drift-correction method implements (Carr et al.
// 2022, Behavior Research Methods 54(1), review ten of them): a trial's
// fixations and text in, a line per fixation out.

#include <map>
#include <string>
#include <vector>

#include "alignment/drift_input.h"
#include "alignment/drift_output.h"

namespace gazemill {

/// Resolved parameters by name (units in the names), for provenance.
using DriftParameters = std::map<std::string, double>;

class DriftCorrector {
 public:
  virtual ~DriftCorrector() = default;
  virtual std::string name() const = 0;
  virtual DriftParameters parameters() const = 0;

  /// Validates the input (std::invalid_argument, see validate()), assigns a
  /// line to every fixation and summarises the fit. A trial without
  /// fixations gives an empty assignment.
  DriftOutput correct(const DriftInput& input) const;

 protected:
  struct Assignment {
    std::vector<int> line;                       // one per fixation
    std::map<std::string, double> method_values; // added to the fit summary
  };
  /// Called with validated input holding at least one fixation.
  virtual Assignment assign(const DriftInput& input) const = 0;
  /// The finished output; a combination overrides it to set its own confidence.
  virtual DriftOutput finish(const DriftInput& input, Assignment a) const;
};

/// Each fixation's nearest line: attach's answer, and the reference for
/// moved_off_nearest_share.
std::vector<int> nearest_lines(const DriftInput& input);

}  // namespace gazemill
