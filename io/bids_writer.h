#pragma once
// Writes a study store's raw samples and detected events as a BIDS
// eye-tracking dataset (BIDS specification v1.11.0, "Physiological
// recordings" and its "Eye-tracking" section), so that a lab can share what
// it analysed. What every recording shares sits in the dataset root's
// task-<label>_* sidecars (the Inheritance Principle); each eye's own
// sidecar holds only its StartTime and RecordedEye. Times are kept as
// whole microseconds, so the dataset reads back to the very same samples.

#include <string>
#include <vector>

namespace gazemill {

class StudyStoreReader;

struct BidsExportSummary {
  std::size_t recordings = 0;
  std::size_t files = 0;
  std::size_t event_rows = 0;  // fixations, saccades and blinks written to physio events
};

/// Writes the dataset into `folder`, which must not exist or be empty; it
/// is written under a temporary name beside it and renamed when complete.
/// `task` is the task label (letters and digits). Throws InputError on a
/// store without samples (an imported fixation list) or a folder in use.
BidsExportSummary write_bids_dataset(const StudyStoreReader& store, const std::string& folder, const std::string& task,
                                     const std::string& dataset_name, const std::string& tool_version);

/// A BIDS label from any text: its letters and digits only.
std::string bids_label(const std::string& text);

}  // namespace gazemill
