#pragma once
// Turns a study design into recordings: per participant, every trial's
// scanpath (reader_model) rendered as raw gaze samples at the tracker's rate,
// with fixational noise, main-sequence saccades, optional post-saccadic
// oscillation, blinks with lid artefacts, track loss and vertical drift,
// plus the ground truth behind them. Deterministic for a seed.

#include <cstdint>
#include <string>
#include <vector>

#include "pipeline/ground_truth.h"
#include "pipeline/recording.h"
#include "pipeline/text_layout.h"
#include "sim/reader_model.h"
#include "sim/study_design.h"

namespace gazemill::sim {

/// How the eye's position changes over a saccade.
enum class SaccadeProfile { half_sine, minimum_jerk };

struct SignalParams {
  double sample_rate_hz = 1000.0;           // 250, 500, 1000 or 2000
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
  // Vertical drift (px): per-trial offset SD, slope SD (px per px from centre),
  // and growth per trial over the session.
  double drift_offset_sd_px = 6.0;
  double drift_slope_sd = 0.01;
  double drift_growth_px_per_trial = 0.25;
  double start_marker_ms = 300.0;           // fixation on a marker left of the first line
  double inter_trial_gap_ms = 1000.0;       // no samples between trials
};

struct SimulationConfig {
  StudyDesign design;
  TextLayoutSpec layout;
  ScreenGeometry screen{1920, 1080, 531.0, 299.0, 700.0};
  ReaderParams reader;
  SignalParams signal;
  std::uint64_t seed = 1;
  std::size_t hard_condition = 1;  // index of the condition with the harder target
};

struct SimulatedRecording {
  Recording recording;   // samples, messages, trials
  RecordingTruth truth;
};

struct SimulatedStudy {
  SimulationConfig config;
  // Items as laid out for each condition: items[item][condition].
  std::vector<std::vector<LaidOutItem>> items;
  std::vector<std::vector<int>> target_regions;  // [item][condition]
  std::vector<SimulatedRecording> recordings;
};

SimulatedStudy simulate_study(const SimulationConfig& config);

/// The small study behind bench/detect's agreement grid and the tests that
/// hold detector defaults to it: two readers of the demo design, seed 77.
SimulationConfig detection_grid_config(double sample_rate_hz, double noise_rms_s2s_deg, bool post_saccadic_oscillation);

/// Saccade duration (ms) from amplitude (deg): D = 2.2 A + 21, the linear
/// main-sequence fit attributed to Carpenter (1988), Movements of the Eyes.
double saccade_duration_ms(double amplitude_deg);

/// Participant label for index i: "p01", "p02", ...
std::string participant_label(std::size_t i);

}  // namespace gazemill::sim
