#pragma once
// Drift-correction results in the store:
//   /recordings/<id>/align/fixations/{input_id,line,corrected_y_px}   line 1-based, 0 = on no line
//                                                                      (corrected_y_px NaN)
//   /recordings/<id>/align/trials/{trial,method,confidence,flagged,excluded,review}
//   /recordings/<id>/align/trials/fit/<name>   each value of the method's fit summary (NaN where unset)

#include <vector>

#include "io/study_store.h"
#include "pipeline/line_assignment.h"

namespace gazemill {

void write_alignment(StudyStoreWriter& store, const std::vector<RecordingAlignment>& alignment);
/// alignment_trials.tsv: recording, trial, method, confidence, flagged,
/// excluded, review, then the fit summary's values by name.
std::string alignment_trials_tsv(const std::vector<RecordingAlignment>& alignment);
/// Every recording's alignment; throws InputError when the store has none.
std::vector<RecordingAlignment> read_alignment(const StudyStoreReader& store);

}  // namespace gazemill
