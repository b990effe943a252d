#pragma once
// Each stage's protocol section, resolved (defaults filled in) as JSON, and
// the keys that say what a result was made from. A key is a SHA-256 over the
// stage's name, its upstream key and its settings; it changes exactly when
// something the result depends on changes (a comment in the protocol does not).

#include <string>
#include <vector>

#include "pipeline/protocol.h"

namespace gazemill {

std::string ingest_settings_json(const Protocol& protocol);
/// The detection settings (method, resolved parameters, eye, blinks, events).
std::string detection_settings_json(const DetectionSpec& spec);
/// What the detect stage records when a fixation list's rows are the events.
std::string imported_events_settings_json(const Protocol& protocol);
std::string cleaning_settings_json(const Protocol& protocol);
/// The region settings and the SHA-256 of the items or boxes file ("" settings without [regions]).
std::string regions_settings_json(const Protocol& protocol);
std::string align_settings_json(const Protocol& protocol);
std::string measure_settings_json(const Protocol& protocol);

/// SHA-256 over a kind name and parts, each length-prefixed so no two lists collide.
std::string make_key(const std::string& kind, const std::vector<std::string>& parts);

}  // namespace gazemill
