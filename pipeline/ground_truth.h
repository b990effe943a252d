#pragma once
// What really happened in a simulated recording, for scoring detectors and
// drift correction: a label per sample, the true fixations, the true drift.

#include <string>
#include <vector>

#include "pipeline/events.h"
#include "pipeline/time_units.h"

namespace gazemill {

struct TrueFixation {
  std::string trial;
  Microseconds start_us = 0;
  Microseconds end_us = 0;   // exclusive
  double x_px = 0;           // where the eye pointed, before drift and noise
  double y_px = 0;
  int line = -1;             // -1: not on the text (e.g. the start marker)
  int region = -1;
  int char_index = -1;
};

/// Vertical drift of one trial: y_recorded = y_true + offset_px +
/// slope * (x - screen centre x) + session_px.
struct TrialDrift {
  std::string trial;
  double offset_px = 0;
  double slope = 0;          // px of vertical drift per px to the right of centre
  double session_px = 0;     // grows with the trial's place in the session
};

struct RecordingTruth {
  std::vector<SampleLabel> labels;  // one per sample of the recording
  std::vector<TrueFixation> fixations;
  std::vector<TrialDrift> drift;
};

}  // namespace gazemill
