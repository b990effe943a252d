#pragma once
// What a sample or a stretch of samples is: the classes the detectors assign
// and the simulator's ground truth uses.

#include <string>

#include "pipeline/time_units.h"

namespace gazemill {

enum class SampleLabel : unsigned char { fixation = 0, saccade = 1, pso = 2, blink = 3, loss = 4, other = 5 };

inline const char* to_string(SampleLabel l) {
  switch (l) {
    case SampleLabel::fixation: return "fixation";
    case SampleLabel::saccade: return "saccade";
    case SampleLabel::pso: return "pso";
    case SampleLabel::blink: return "blink";
    case SampleLabel::loss: return "loss";
    case SampleLabel::other: return "other";
  }
  return "other";
}

}  // namespace gazemill
