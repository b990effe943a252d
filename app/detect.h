#pragma once
// detect: fixations, saccades and blinks for every trial of a store.

#include <cstdint>
#include <string>

#include "pipeline/protocol.h"

namespace gazemill {

struct DetectReport {
  std::size_t recordings = 0;
  std::uint64_t samples = 0, fixations = 0, saccades = 0, blinks = 0;
};

/// The detection settings as JSON (method, resolved parameters, eye, blinks, events).
std::string detection_settings_json(const DetectionSpec& spec);

/// Runs the protocol's detection on every recording of `store_path` and
/// replaces the store with a copy holding the events (atomically).
DetectReport detect_study(const Protocol& protocol, const std::string& store_path);

}  // namespace gazemill
