#include "detectors/recording_detection.h"

#include <algorithm>
#include <cmath>

#include "detectors/detector_registry.h"
#include "detectors/gaze_trace.h"

namespace gazemill {
namespace {

// Higher is better: the share of valid samples, ties broken by lower RMS sample-to-sample distance.
std::pair<double, double> quality(const GazeTrace& g) {
  std::size_t valid = 0, pairs = 0;
  double s2s = 0;
  for (std::size_t i = 0; i < g.size(); ++i) {
    valid += g.valid[i];
    if (i > 0 && g.valid[i] && g.valid[i - 1]) {
      const double dx = g.x_deg[i] - g.x_deg[i - 1], dy = g.y_deg[i] - g.y_deg[i - 1];
      s2s += dx * dx + dy * dy;
      ++pairs;
    }
  }
  const double share = g.size() ? static_cast<double>(valid) / static_cast<double>(g.size()) : 0.0;
  return {share, pairs ? -std::sqrt(s2s / static_cast<double>(pairs)) : 0.0};
}

}  // namespace

std::pair<std::size_t, std::size_t> sample_range(const std::vector<Microseconds>& t, Microseconds start, Microseconds end) {
  const auto a = std::lower_bound(t.begin(), t.end(), start);
  const auto b = std::upper_bound(a, t.end(), end);
  return {static_cast<std::size_t>(a - t.begin()), static_cast<std::size_t>(b - t.begin())};
}

RecordingDetection detect_recording(const Recording& rec, const EventDetector& detector, const DetectionSpec& spec) {
  return detect_recording(rec, detector, spec, VisualAngle(rec.screen));
}

RecordingDetection detect_recording(const Recording& rec, const EventDetector& detector, const DetectionSpec& spec,
                                    const VisualAngle& angle) {
  RecordingDetection out;
  out.labels.assign(rec.samples.size(), SampleLabel::other);
  const BlinkParams bp = blink_params(spec);
  const EventParams ep = event_params(spec);
  const bool both = rec.samples.has_left && rec.samples.has_right;
  for (const Trial& trial : rec.trials) {
    const auto [first, last] = sample_range(rec.samples.time_us, trial.start_us, trial.end_us);
    if (last <= first) {
      out.events.trials.push_back({trial.id, rec.samples.has_left ? Eye::left : Eye::right, {}});
      continue;
    }
    GazeTrace trace;
    Eye eye = rec.samples.has_left ? Eye::left : Eye::right;
    if (both) {
      if (spec.eye == EyeChoice::left || spec.eye == EyeChoice::right) {
        eye = spec.eye == EyeChoice::left ? Eye::left : Eye::right;
        trace = make_gaze_trace(rec.samples, eye, first, last, angle, spec.interpolate_max_ms);
      } else {
        GazeTrace l = make_gaze_trace(rec.samples, Eye::left, first, last, angle, spec.interpolate_max_ms);
        GazeTrace r = make_gaze_trace(rec.samples, Eye::right, first, last, angle, spec.interpolate_max_ms);
        if (spec.eye == EyeChoice::average) {
          trace = average_eyes(l, r, angle);
          eye = Eye::left;
        } else if (quality(r) > quality(l)) {
          trace = std::move(r);
          eye = Eye::right;
        } else {
          trace = std::move(l);
          eye = Eye::left;
        }
      }
    } else {
      trace = make_gaze_trace(rec.samples, eye, first, last, angle, spec.interpolate_max_ms);
    }
    remove_spikes(trace, spec.spike_deg);
    ParameterList fitted;
    const std::vector<SampleLabel> labels = label_trace(trace, detector, bp, ep, &fitted);
    std::copy(labels.begin(), labels.end(), out.labels.begin() + static_cast<std::ptrdiff_t>(first));
    collect_events(trace, labels, trial.id, eye, out.events);
    out.events.trials.push_back({trial.id, eye, std::move(fitted)});
  }
  return out;
}

}  // namespace gazemill
