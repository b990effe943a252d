#pragma once
// Turns a study design into recordings, one participant at a time: every
// trial's scanpath (reader_model for sentences, passage_scanpath for
// passages) rendered as raw gaze samples at the tracker's rate, with
// fixational noise, main-sequence saccades, optional post-saccadic
// oscillation, blinks with lid artefacts, track loss, pupil diameter and
// vertical drift, plus the ground truth behind them. Participants are
// independent: participant p is the same whichever others are simulated.
// Deterministic for a seed.

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/ground_truth.h"
#include "pipeline/recording.h"
#include "pipeline/text_layout.h"
#include "sim/passage_scanpath.h"
#include "sim/reader_model.h"
#include "sim/study_design.h"

namespace gazemill::sim {

/// How the eye's position changes over a saccade.
enum class SaccadeProfile { half_sine, minimum_jerk };

struct SignalParams {
  double sample_rate_hz = 1000.0;           // any rate from 100 to 2000 Hz
  bool binocular = false;
  double noise_rms_s2s_deg = 0.03;          // precision as RMS sample-to-sample distance
  // The main sequence's durations are measured between velocity criteria, so
  // the eye is already moving at their onset: a half-sine velocity profile
  // (our choice) starts briskly; minimum jerk spends the first and last tenth
  // of the duration barely moving.
  SaccadeProfile saccade_profile = SaccadeProfile::half_sine;
  bool post_saccadic_oscillation = true;
  double pso_duration_ms = 20.0;
  double pso_amplitude_deg = 0.15;
  double blink_probability_per_saccade = 0.02;
  double blink_min_ms = 100.0, blink_max_ms = 300.0;  // samples missing in a blink
  double lid_artefact_ms = 25.0;            // partial-lid samples before and after the gap
  double loss_probability_per_fixation = 0.01;
  double loss_min_ms = 10.0, loss_max_ms = 60.0;
  // Pupil diameter (mm): a participant's mean is drawn from N(mean, sd)
  // within min..max; the diameter wanders around it (an Ornstein-Uhlenbeck
  // process with this SD and time constant) and stays within 2-8 mm, the
  // usual range of adult pupils (from memory). Lid artefacts shrink it.
  double pupil_mean_mm = 4.0;
  double pupil_participant_sd_mm = 0.6;
  double pupil_participant_min_mm = 2.5, pupil_participant_max_mm = 6.5;
  double pupil_wander_sd_mm = 0.25;
  double pupil_wander_time_constant_s = 2.0;
  // Vertical drift of sentence trials (px): per-trial offset SD, slope SD (px
  // per px from the screen's centre), and growth per trial over the session
  // (passage trials have it too; their offset and slope are drawn from
  // PassageDistortionRanges instead).
  double drift_offset_sd_px = 6.0;
  double drift_slope_sd = 0.01;
  double drift_growth_px_per_trial = 0.1;
  double start_marker_ms = 300.0;           // fixation on a marker left of the first line
  double inter_trial_gap_ms = 1000.0;       // no samples between trials
  // Comprehension questions are not recorded: the gaze stops at "text hidden".
  double question_delay_ms = 200.0;         // from "text hidden" to "question shown"
  double answer_min_ms = 1200.0, answer_max_ms = 3500.0;  // time to answer
};

/// The distortions of a passage trial, after the kinds Carr et al. (2022,
/// Behavior Research Methods 54(1), 287-310) simulate: each drawn per trial,
/// uniformly from -max..max (noise and the regression probabilities from
/// 0..max). Carr et al. swept each kind alone over a wide range to break the
/// correction methods (from memory); these defaults (our choice) mix all of
/// them at the size a tracker shows after a good calibration, so that the
/// nearest line is often but not always right.
/// Recorded y = true y + offset + slope * (x - screen centre x)
///            + shift * (true y - first line's centre) + noise of the fixation + session drift.
struct PassageDistortionRanges {
  double noise_sd_lines = 0.2;    // SD of a fixation's vertical noise, in line heights: 0..0.2
  double slope = 0.02;            // px per px: -0.02..0.02
  double shift = 0.04;            // px per px below the first line: -0.04..0.04
  double offset_lines = 0.4;      // in line heights: -0.4..0.4
  double within_line_regression = 0.15;   // probability per first-pass fixation: 0..0.15
  double between_line_regression = 0.05;  // 0..0.05
};

struct SimulationConfig {
  StudyDesign design;
  TextLayoutSpec layout;
  ScreenGeometry screen{1920, 1080, 531.0, 299.0, 700.0};
  ReaderParams reader;                  // sentences
  PassageReaderParams passage_reader;   // passages
  PassageDistortionRanges passage_distortion;
  SignalParams signal;
  std::uint64_t seed = 1;
};

/// A stimulus as laid out: a sentence item in each variant of the text
/// factor, or a passage (one variant).
struct Stimulus {
  std::string id;
  bool passage = false;
  std::vector<std::string> marked_text;  // per variant, '/' between regions
  std::vector<LaidOutItem> layout;       // per variant
  std::vector<int> target_region;        // per variant, 0-based; -1: none
};

struct StudyMaterials {
  std::vector<Stimulus> sentences;
  std::vector<Stimulus> passages;
};

/// What one trial was, beyond the recording's messages.
struct TrialTruth {
  std::string trial;
  bool passage = false;
  std::size_t stimulus = 0;              // index into StudyMaterials::sentences or ::passages
  std::size_t variant = 0;               // of the stimulus
  std::optional<std::size_t> cell;       // sentences: the design cell; passages: none
  std::size_t list = 0;                  // 0-based
  std::optional<int> answer_correct;     // 0/1 when a question followed
  // Passages: the drawn distortions not in RecordingTruth::drift, and the
  // reader's regression probabilities.
  double shift = 0;
  double noise_sd_px = 0;
  double within_line_regression = 0;
  double between_line_regression = 0;
};

struct SimulatedRecording {
  Recording recording;   // samples, messages, trials
  RecordingTruth truth;  // lines, regions and characters 0-based, -1 for none
  std::vector<TrialTruth> trials;
  // Per true fixation: how far its recorded y lies from its true y (px),
  // every drift component together, sample noise excluded.
  std::vector<double> fixation_drift_y_px;
  std::size_t list = 0;
  double answer_accuracy = 0;
  double pupil_mean_mm = 0;
};

/// Simulates participants one at a time from a fixed configuration.
class StudySimulator {
 public:
  /// Validates the design and lays out every stimulus; throws
  /// std::invalid_argument on a bad design or text that does not fit.
  explicit StudySimulator(SimulationConfig config);
  StudySimulator(const StudySimulator&) = delete;
  StudySimulator& operator=(const StudySimulator&) = delete;
  const SimulationConfig& config() const { return config_; }
  const StudyMaterials& materials() const { return materials_; }
  std::size_t participants() const { return static_cast<std::size_t>(config_.design.participants); }
  const Stimulus& stimulus(const TrialTruth& t) const { return t.passage ? materials_.passages[t.stimulus] : materials_.sentences[t.stimulus]; }
  /// Participant p (0-based). Thread-safe.
  SimulatedRecording participant(std::size_t p) const;

 private:
  SimulationConfig config_;
  StudyMaterials materials_;
};

/// A whole study in memory: for tests and small studies. The command streams
/// instead (sim/study_export.h, simulate_to_folder).
struct SimulatedStudy {
  SimulationConfig config;
  StudyMaterials materials;
  std::vector<SimulatedRecording> recordings;
  const Stimulus& stimulus(const TrialTruth& t) const { return t.passage ? materials.passages[t.stimulus] : materials.sentences[t.stimulus]; }
};

SimulatedStudy simulate_study(const SimulationConfig& config);

/// The small study behind bench/detect's agreement grid and the tests that
/// hold detector defaults to it: two readers of the demo design's first 12
/// items (no passages), seed 77.
SimulationConfig detection_grid_config(double sample_rate_hz, double noise_rms_s2s_deg, bool post_saccadic_oscillation);

/// Saccade duration (ms) from amplitude (deg): D = 2.2 A + 21, the linear
/// main-sequence fit attributed to Carpenter (1988), Movements of the Eyes.
double saccade_duration_ms(double amplitude_deg);

/// Participant label for index i: "p01", "p02", ...
std::string participant_label(std::size_t i);

}  // namespace gazemill::sim
