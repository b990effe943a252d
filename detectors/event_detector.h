#pragma once
// The one interface every fixation/saccade detector implements, and the
// steps all of them share: missing data to blinks and track loss first,
// minimum durations and noise limits after, then events from labels.

#include <map>
#include <memory>
#include <string>
#include <vector>

#include "detectors/gaze_trace.h"
#include "detectors/smooth_pursuit.h"
#include "pipeline/events.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// Resolved parameters by name (units in the names), for provenance.
using ParameterList = std::map<std::string, double>;

class EventDetector {
 public:
  virtual ~EventDetector() = default;
  virtual std::string name() const = 0;
  virtual ParameterList parameters() const = 0;
  /// Sets fixation, saccade or pso on samples that are still SampleLabel::other;
  /// blink and loss samples are already labelled and must be left alone.
  /// Returns the thresholds it set from this trace's own data (none for a
  /// fixed threshold), for the store.
  virtual ParameterList label(const GazeTrace& trace, std::vector<SampleLabel>& labels) const = 0;
};

/// Missing data: a run of missing gaze is a blink when the pupil is missing
/// too and the run lasts blink_min_ms..blink_max_ms; otherwise track loss.
/// Without any pupil signal in the trace, the run and the lid artefacts
/// around it together must last blink_min_ms..blink_max_ms. Blinks take in
/// the lid artefacts on either side, as far as the gaze moves faster than
/// in a fixation, but no further than the paddings.
/// The paddings are limits, not lengths: the speed decides where a blink
/// ends. The lid opens more slowly than it closes (Evinger, Manning &
/// Sibony 1991, Investigative Ophthalmology & Visual Science 32(2), from
/// memory), and the gaze drifts back for longer after a blink than it dips
/// before one, so the limit after is twice the one before. With 50 ms after,
/// both blinks coded in the development set (bench/realdata) were cut while
/// the gaze still moved, on average 84 ms before the coder's end; 100 and 150 ms after
/// gave the same labels there (the speed stopped the growth first).
struct BlinkParams {
  double blink_min_ms = 70.0;
  double blink_max_ms = 500.0;
  double padding_before_ms = 50.0;
  double padding_after_ms = 100.0;
};

/// Shared clean-up after labelling.
struct EventParams {
  double min_fixation_ms = 40.0;   // shorter fixation runs become "other"
  double min_saccade_ms = 10.0;    // shorter saccade runs inside a fixation become fixation
  double max_velocity_deg_s = 1000.0;  // a saccade run faster than this anywhere is noise
  // A fixation interrupted by a short stretch of lost or unusable samples
  // (not a blink) continues when the gaze on both sides is this close.
  double max_fixation_gap_ms = 20.0;
  double max_fixation_gap_shift_deg = 0.5;
  // Post-saccadic oscillation samples kept as such, or folded into the
  // fixation after them or the saccade before them (before any other
  // clean-up, so the saccade and fixation rules see the folded runs).
  PsoHandling pso = PsoHandling::separate;
  // Smooth pursuit apart from fixations (detectors/smooth_pursuit.h), first
  // of all; off (dispersion 0) by default.
  PursuitParams pursuit;
};

/// Single-sample spikes (a sample far from both neighbours while they agree)
/// become missing. Returns how many were removed. 0 deg = off.
std::size_t remove_spikes(GazeTrace& trace, double spike_deg);

/// Labels for a trace: missing data first (blink/loss), then the detector;
/// `fitted`, when given, receives what the detector set from the trace.
std::vector<SampleLabel> label_trace(const GazeTrace& trace, const EventDetector& detector, const BlinkParams& blinks,
                                     const EventParams& events, ParameterList* fitted = nullptr);

/// Labels missing samples as blink or loss, and the first sample after a gap
/// in the timestamps (is_gap_step) as loss; everything else "other".
std::vector<SampleLabel> label_missing(const GazeTrace& trace, const BlinkParams& params);

/// The speed (deg/s) below which the gaze is at rest, as blinks' lid
/// artefacts are bounded: Nystrom & Holmqvist's onset threshold with their
/// defaults, on a Savitzky-Golay velocity over kBlinkVelocityWindowMs.
/// `speed`, when given, receives that velocity.
inline constexpr double kBlinkVelocityWindowMs = 10.0;
double fixation_speed_level(const GazeTrace& trace, std::vector<double>* speed = nullptr);

/// Minimum durations, noise limit, and no saccades glued to blinks or loss.
void tidy_labels(const GazeTrace& trace, const EventParams& params, std::vector<SampleLabel>& labels);

/// Turns labels into events (fixations, saccades, blinks) for `trial`.
void collect_events(const GazeTrace& trace, const std::vector<SampleLabel>& labels, const std::string& trial, Eye eye,
                    DetectedEvents& out);

}  // namespace gazemill
