#pragma once
// Smooth pursuit told apart from fixation by the second stage of I-VDT,
// the velocity and dispersion threshold identification of Komogortsev &
// Karpov (2013, "Automated classification and scoring of smooth pursuit eye
// movements in the presence of fixations and saccades", Behavior Research
// Methods 45(1), 203-215): once saccades are found by velocity, the
// remaining samples go through I-DT (Salvucci & Goldberg 2000) with a
// temporal window; a window whose dispersion, (max x - min x) + (max y -
// min y), stays within the threshold is a fixation and grows while it
// stays within; a sample that starts no such window is smooth pursuit.
// Here the first stage is whichever detector the study uses, and the
// second stage runs over each run of its fixation samples. Our change: a
// run shorter than the window is judged as one window, so a short fixation
// between two saccades is not pursuit for being short.

#include <cstddef>
#include <vector>

#include "detectors/gaze_trace.h"
#include "pipeline/events.h"

namespace gazemill {

struct PursuitParams {
  double dispersion_deg = 0.0;  // 0 = no pursuit class (the default for reading)
  double window_ms = 100.0;     // the temporal window (the minimum fixation duration of I-DT)
};

/// Relabels fixation samples that belong to no window of low dispersion as
/// SampleLabel::pursuit. Returns how many samples it relabelled.
std::size_t label_pursuit(const GazeTrace& trace, const PursuitParams& params, std::vector<SampleLabel>& labels);

}  // namespace gazemill
