#pragma once
// Writes a simulated study the way a lab would receive it: one delimited
// sample export per participant (samples plus message rows), the same data
// in the BIDS eye-tracking layout, protocol files that read both, the region
// file, and the ground truth. Writing tracker-like files is the simulator's
// own job, so it lives here rather than in io/.
//
// Ground truth layout (under truth/):
//   <participant>_labels.tsv.gz   time_us, label (fixation|saccade|pso|blink|loss), one row per sample
//   fixations.tsv                 participant, trial, start_us, end_us (exclusive), x_px, y_px
//                                 (true position, no drift or noise), line, region, char_index
//                                 (-1 = not on the text: the start marker)
//   drift.tsv                     participant, trial, offset_px, slope, session_px
//                                 y_recorded = y_true + offset_px + slope*(x - centre_x) + session_px
//   trials.tsv                    participant, trial, item, condition, target_region
// Regions: items.tsv (item, condition, text with '/' between regions, roles)
// and regions.tsv (one box per region and line; region and line from 1).

#include <string>

#include "sim/study_simulator.h"

namespace gazemill::sim {

struct ExportOptions {
  bool delimited = true;
  bool bids = true;
  int gzip_level = 1;  // zlib level of the .gz files: 1 fast, 9 small
};

/// Writes everything under `folder` (created if needed). Returns the path of
/// the delimited-input protocol file.
std::string export_study(const SimulatedStudy& study, const std::string& folder, const ExportOptions& options = {});

}  // namespace gazemill::sim
