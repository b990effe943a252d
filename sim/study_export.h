#pragma once
// Writes a simulated study the way a lab would receive it: one delimited
// sample export per participant (samples plus message rows), the same data
// in the BIDS eye-tracking layout, protocol files that read both, the region
// files, and the ground truth. Writing tracker-like files is the simulator's
// own job, so it lives here rather than in io/. Participants are simulated
// and written one at a time (simulate_to_folder), so memory does not grow
// with their number.
//
// The sample exports (raw/<participant>_s1.tsv.gz), tab-separated with a header:
//   time_us                  tracker clock, integer microseconds
//   gaze_x, gaze_y           px from the screen's top left, 2 decimals; binocular
//                            exports have left_x, left_y, left_pupil, right_x, ...
//   pupil                    pupil diameter, mm, 2 decimals
//   message                  on message rows only (their gaze fields are empty)
// An empty field is a missing value (lost tracking, blinks). The BIDS copy
// writes n/a, as BIDS asks.
//
// Messages, in a trial's order (N the trial, 1, 2, ... in presentation order):
//   begin trial N
//   show sentence ITEM FACTOR LEVEL [FACTOR LEVEL ...] list L   (a sentence item,
//                            e.g. "show sentence 17 frequency rare preview invalid list 2")
//   show passage ITEM list L (a passage: no factor levels)
//   text shown               the text appears (after a fixation on a marker left of line 1)
//   boundary crossed         sentences: the eyes first cross the invisible boundary
//                            before the target, and the preview becomes the target
//   text hidden              the reader is done (the last sample of the trial)
//   question shown           after a third of the trials; its screen is not recorded
//   answer 1 | answer 0      the comprehension question answered correctly or not
//   end trial N
// Lists L count from 1; participant p is in list ((p - 1) mod lists) + 1.
//
// Ground truth (under truth/). Lines, regions and characters count from 1,
// as everywhere in gazemill; an empty field means none.
//   <participant>_labels.tsv.gz   time_us, label (fixation|saccade|pso|blink|loss), one row per sample
//   fixations.tsv                 participant, trial, start_us, end_us (exclusive), x_px, y_px
//                                 (true position: no drift or noise), line, region, char
//                                 (empty on the start marker), drift_y_px (recorded minus true
//                                 y of the fixation, every drift component, sample noise excluded)
//   drift.tsv                     participant, trial, offset_px, slope, shift, noise_sd_px, session_px:
//                                 y_recorded = y_true + offset_px + slope*(x - screen centre x)
//                                 + shift*(y_true - first line's centre) + noise + session_px, where
//                                 the noise is one draw per fixation from N(0, noise_sd_px);
//                                 shift and noise are 0 in sentence trials
//   trials.tsv                    participant, trial, block (sentence|passage), item, list,
//                                 one column per factor (empty for passages), target_region,
//                                 answer_correct (empty: no question), lines (of the text),
//                                 within_line_regression, between_line_regression
//                                 (passages: the reader's probabilities in that trial)
//   participants.tsv              participant, list, answer_accuracy, pupil_mean_mm
// Regions: items.tsv (item, a column per factor the text differs by, text
// with '/' between regions, roles) and regions.tsv (one box per region and
// line; region and line from 1). Passages have an empty factor column.
// simulation.json holds every setting and the seed.

#include <cstdint>
#include <memory>
#include <string>

#include "sim/study_simulator.h"

namespace gazemill::sim {

struct ExportOptions {
  bool delimited = true;
  bool bids = true;
  int gzip_level = 1;  // zlib level of the .gz files: 1 fast, 9 small
};

/// What a simulation wrote.
struct ExportSummary {
  std::string protocol;  // the delimited-input protocol file
  std::size_t participants = 0;
  std::size_t trials = 0;
  std::uint64_t samples = 0;
  std::uint64_t fixations = 0;  // true fixations on the text
};

/// Writes a study participant by participant. The study-wide files are
/// written when it is made; write_participant may run on several threads at
/// once (each touches only its participant's files); add_truth must then be
/// called in participant order; finish closes the truth tables.
class StudyWriter {
 public:
  StudyWriter(const SimulationConfig& config, const StudyMaterials& materials, std::string folder, ExportOptions options);
  ~StudyWriter();
  StudyWriter(const StudyWriter&) = delete;
  StudyWriter& operator=(const StudyWriter&) = delete;

  /// The rows one participant adds to the shared truth tables.
  struct TruthRows {
    std::string fixations, drift, trials, participant;
    std::uint64_t samples = 0, text_fixations = 0;
    std::size_t trial_count = 0;
  };
  /// Writes the participant's sample exports (delimited, BIDS) and labels.
  TruthRows write_participant(const SimulatedRecording& recording) const;
  void add_truth(const TruthRows& rows);
  ExportSummary finish();

 private:
  struct Tables;
  const Stimulus& stimulus(const TrialTruth& t) const;
  const SimulationConfig& config_;
  const StudyMaterials& materials_;
  std::string folder_;
  ExportOptions options_;
  std::unique_ptr<Tables> tables_;
  ExportSummary summary_;
};

/// Simulates and writes every participant, `threads` at a time (0: one per
/// core), holding at most that many participants in memory.
ExportSummary simulate_to_folder(const SimulationConfig& config, const std::string& folder, const ExportOptions& options = {},
                                 unsigned threads = 0);

/// Writes a study simulated in memory under `folder` (created if needed).
/// Returns the path of the delimited-input protocol file.
std::string export_study(const SimulatedStudy& study, const std::string& folder, const ExportOptions& options = {});

}  // namespace gazemill::sim
