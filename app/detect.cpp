#include <filesystem>

#include "app/detect.h"

#include <nlohmann/json.hpp>
#include <spdlog/spdlog.h>

#include "app/ingest.h"
#include "detectors/detector_registry.h"
#include "detectors/recording_detection.h"
#include "gazemill/version.h"
#include "io/sha256.h"
#include "io/study_store.h"

namespace gazemill {

std::string detection_settings_json(const DetectionSpec& spec) {
  const auto detector = make_detector(spec);
  nlohmann::json j;
  j["method"] = spec.method;
  j["parameters"] = detector->parameters();
  j["velocity"] = spec.velocity;
  const char* eyes[] = {"left", "right", "best", "average"};
  j["eye"] = eyes[static_cast<int>(spec.eye)];
  j["interpolate_max_ms"] = spec.interpolate_max_ms;
  j["blinks"] = {{"min_ms", spec.blink_min_ms}, {"max_ms", spec.blink_max_ms},
                 {"padding_before_ms", spec.blink_padding_before_ms}, {"padding_after_ms", spec.blink_padding_after_ms}};
  j["events"] = {{"min_fixation_ms", spec.min_fixation_ms}, {"min_saccade_ms", spec.min_saccade_ms},
                 {"max_velocity_deg_s", spec.max_velocity_deg_s}, {"max_fixation_gap_ms", spec.max_fixation_gap_ms},
                 {"max_fixation_gap_shift_deg", spec.max_fixation_gap_shift_deg}, {"spike_deg", spec.spike_deg}};
  return j.dump();
}

DetectReport detect_study(const Protocol& protocol, const std::string& store_path) {
  const DetectionSpec& spec = protocol.detection;
  const auto detector = make_detector(spec);
  const std::string settings = detection_settings_json(spec);
  const std::string parameters = nlohmann::json(detector->parameters()).dump();
  StudyStoreReader source(store_path);
  auto out = StudyStoreWriter::derive(store_path, {"events"}, "detect");
  DetectReport report;
  for (const auto& id : source.recording_ids()) {
    const Recording rec = source.read_recording(id, true);
    const RecordingDetection d = detect_recording(rec, *detector, spec);
    out->write_events(id, d.events, d.labels, spec.method, parameters);
    ++report.recordings;
    report.samples += rec.samples.size();
    report.fixations += d.events.fixations.size();
    report.saccades += d.events.saccades.size();
    report.blinks += d.events.blinks.size();
    spdlog::debug("{}: {} fixations, {} saccades, {} blinks", id, d.events.fixations.size(), d.events.saccades.size(),
                  d.events.blinks.size());
  }
  out->write_stage_provenance("detect", {kVersion, protocol.text, sha256_hex(protocol.text), utc_now_iso8601(), settings,
                                         std::filesystem::absolute(protocol.path).lexically_normal().string()});
  out->commit();
  return report;
}

}  // namespace gazemill
