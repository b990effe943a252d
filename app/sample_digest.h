#pragma once
// Computes a recording's sample digest (pipeline/sample_digest.h): signal
// quality and trial time courses for the report. Detect makes it trial by
// trial while each trial's samples are decoded; the report makes it from a
// whole recording only for a store that has no digest (or one made for
// another number of points).

#include <cstddef>
#include <vector>

#include "detectors/visual_angle.h"
#include "pipeline/events.h"
#include "pipeline/protocol.h"
#include "pipeline/recording.h"
#include "pipeline/sample_digest.h"

namespace gazemill {

struct DigestSettings {
  EyeChoice eye = EyeChoice::best;        // as detection chose: the eye drawn and measured
  std::size_t max_points_per_trial = kTimeCoursePoints;  // the viewer's time course budget
};

/// Samples with no valid gaze in any recorded eye.
std::uint64_t samples_without_gaze(const SampleColumns& samples);

/// Adds one trial: its samples are rows [first, last) of `samples` (those
/// timed within the trial's start and end), `fixations` those detected in it
/// (null when detection has not run: no precision then); `angle` converts
/// the recording's screen.
void digest_trial(SampleDigest& digest, const SampleColumns& samples, std::size_t first, std::size_t last, const Trial& trial,
                  const VisualAngle& angle, double sample_rate_hz, const std::vector<FixationEvent>* fixations,
                  const DigestSettings& settings);

/// A whole recording whose samples are in memory; `events` null when detection has not run.
SampleDigest digest_recording(const Recording& recording, const DetectedEvents* events, const DigestSettings& settings);

}  // namespace gazemill
