#pragma once
// Creates detectors by name from the protocol's detection section; the one
// place that knows every method and its parameter names.

#include <memory>
#include <string>
#include <vector>

#include "detectors/event_detector.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// Throws std::invalid_argument naming an unknown method, an unknown
/// parameter (and the known ones) or an impossible value.
std::unique_ptr<EventDetector> make_detector(const DetectionSpec& spec);

/// Method names, for help texts and errors.
std::vector<std::string> detector_names();

BlinkParams blink_params(const DetectionSpec& spec);
EventParams event_params(const DetectionSpec& spec);

}  // namespace gazemill
