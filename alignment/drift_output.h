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
  // Always present, for every method:
  //   slope                    least-squares slope of (y - assigned line centre) on x (px per px)
  //   offset_px                that fit's value at the leftmost word centre (x = 0 without words)
  //   residual_rms_px          root mean square of (y - assigned line centre)
  //   moved_off_nearest_share  share of fixations given a line other than their nearest
  //   confidence               in [0, 1]; see assignment_confidence and majority_vote
  // and the method's own values (e.g. regress's model_sd_px).
  std::map<std::string, double> fit;
};

/// Confidence of one method's assignment (our definition, no source): the
/// mean over fixations of clamp(1 - r / line_height_px, 0, 1), where r is the
/// distance from the fixation to the centre of the line it was given. 1 when
/// every fixation sits on its line's centre; a fixation left on its nearest
/// line scores at least 0.5, one moved to another line less than 0.5, so the
/// share moved off the nearest line and the residual distance both lower it.
/// 1 for a trial without fixations (nothing was assigned).
double assignment_confidence(const DriftInput& input, const std::vector<int>& line);

/// The output for `line` (one entry per fixation, each a valid line index):
/// corrected y and the shared fit values, with `confidence` from
/// assignment_confidence; `method_values` are added to the fit.
DriftOutput make_drift_output(const DriftInput& input, std::vector<int> line,
                              const std::map<std::string, double>& method_values = {});

}  // namespace gazemill
