#pragma once
// What a drift-correction method returns for one trial: a line per fixation,
// the corrected y (that line's centre), and a summary of the fit by name with
// the unit in the name.

#include <map>
#include <string>
#include <vector>

#include "alignment/drift_input.h"

namespace gazemill {

struct DriftOutput {
  std::vector<int> line;               // 0-based line per fixation, in input order
  std::vector<double> corrected_y_px;  // the centre y of that line
  // Always present, for every method (see fit_drift_model):
  //   offset_px, slope, shift      the systematic drift the assignment implies
  //   residual_rms_px              root mean square of (y - assigned line centre)
  //   unexplained_rms_px           root mean square of what that drift leaves unexplained
  //   moved_off_nearest_share      share of fixations given a line other than their nearest
  //   confidence                   in [0, 1]; see assignment_confidence and MajorityCorrector
  // and the method's own values (e.g. regress's model_sd_px).
  std::map<std::string, double> fit;
};

/// The systematic drift an assignment implies: y - (assigned line centre)
/// fitted by least squares as offset_px + slope * (x - x0) + shift * (line
/// centre - first line centre), x0 the leftmost word centre (0 without
/// words). Offset, slope and shift are the three systematic distortions
/// Carr et al. (2022) simulate; what the fit leaves is noise or fixations on
/// the wrong line. A term the data cannot determine (all fixations in one
/// column, or on one line) is left at 0.
struct DriftModelFit {
  double offset_px = 0;               // drift at x0 on the first line
  double slope = 0;                   // px of drift per px to the right
  double shift = 0;                   // px of drift per px further down the page
  std::vector<double> unexplained_px; // per fixation, y minus line centre minus the fitted drift
};
DriftModelFit fit_drift_model(const DriftInput& input, const std::vector<int>& line);

/// Confidence per fixation (our definition, no source): clamp(1 - |e| /
/// line_height_px, 0, 1), e the part of its displacement from its line that
/// the fitted drift leaves unexplained. 1 when a smooth drift accounts for
/// the fixation exactly; 0.5 when it sits half a line from where that drift
/// puts its line; 0 a whole line off (a fixation given the wrong line among
/// right ones usually is).
std::vector<double> fixation_confidence(const DriftInput& input, const std::vector<int>& line);

/// The mean of fixation_confidence: a single method's confidence for the
/// trial. Drift that the model explains (offset, slope, shift) does not lower
/// it; noise, and fixations put on a line that does not fit the others' drift,
/// do. 1 for a trial without fixations (nothing was assigned).
double assignment_confidence(const DriftInput& input, const std::vector<int>& line);

/// The output for `line` (one entry per fixation, each a valid line index):
/// corrected y and the shared fit values, with `confidence` from
/// assignment_confidence; `method_values` are added to the fit.
DriftOutput make_drift_output(const DriftInput& input, std::vector<int> line,
                              const std::map<std::string, double>& method_values = {});

}  // namespace gazemill
