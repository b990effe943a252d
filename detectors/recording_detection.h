#pragma once
// Detection over a whole recording, trial by trial, with the protocol's
// choice of eye when both were recorded.

#include <vector>

#include "detectors/event_detector.h"
#include "detectors/visual_angle.h"
#include "pipeline/protocol.h"
#include "pipeline/recording.h"

namespace gazemill {

struct RecordingDetection {
  DetectedEvents events;
  std::vector<SampleLabel> labels;  // one per sample of the recording; "other" outside trials
};

/// Index range [first, last) of the samples inside [start_us, end_us].
std::pair<std::size_t, std::size_t> sample_range(const std::vector<Microseconds>& time_us, Microseconds start_us,
                                                 Microseconds end_us);

RecordingDetection detect_recording(const Recording& recording, const EventDetector& detector, const DetectionSpec& spec);
/// The same with the recording screen's conversion already made (it is
/// tabulated once per screen; callers that detect trial by trial keep one).
RecordingDetection detect_recording(const Recording& recording, const EventDetector& detector, const DetectionSpec& spec,
                                    const VisualAngle& angle);

}  // namespace gazemill
