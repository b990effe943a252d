#include "detectors/detector_registry.h"

#include <cmath>
#include <functional>
#include <map>
#include <stdexcept>

#include "detectors/dispersion_threshold_detector.h"
#include "detectors/engbert_kliegl_detector.h"
#include "detectors/nystrom_holmqvist_detector.h"
#include "detectors/velocity_threshold_detector.h"

namespace gazemill {
namespace {

// Binds parameter names to fields, then applies the protocol's values.
// Every value must be finite, and sizes are bounded: a filter of 10^18 ms or
// an order of 10^300 is a typing slip, and casting it to int is undefined.
class Binder {
 public:
  Binder& positive(const std::string& name, double& field) { return add(name, field, true); }
  Binder& non_negative(const std::string& name, double& field) { return add(name, field, false); }
  Binder& whole(const std::string& name, int& field) {
    setters_[name] = [&field, name](double v) {
      if (!(v >= 1 && v <= kMostWhole) || v != std::floor(v)) {
        throw std::invalid_argument("parameter " + name + " must be a whole number from 1 to " + std::to_string(kMostWhole));
      }
      field = static_cast<int>(v);
    };
    return *this;
  }
  void apply(const std::string& method, const std::map<std::string, double>& given) const {
    for (const auto& [name, value] : given) {
      auto it = setters_.find(name);
      if (it == setters_.end()) {
        std::string known;
        for (const auto& [k, f] : setters_) known += (known.empty() ? "" : ", ") + k;
        throw std::invalid_argument("method " + method + " has no parameter " + name + "; it has: " + known);
      }
      it->second(value);
    }
  }

 private:
  static constexpr int kMostWhole = 100;            // sample counts and filter orders
  static constexpr double kMostWindowMs = 1000.0;   // filters and noise windows
  static constexpr double kMostDurationMs = 60000.0;

  Binder& add(const std::string& name, double& field, bool strictly) {
    setters_[name] = [&field, name, strictly](double v) {
      if (!std::isfinite(v) || (strictly ? !(v > 0) : !(v >= 0))) {
        throw std::invalid_argument("parameter " + name + " must be a finite number " + (strictly ? "above zero" : "of zero or more"));
      }
      const bool window = name.find("window_ms") != std::string::npos;
      const bool duration = name.size() > 3 && name.compare(name.size() - 3, 3, "_ms") == 0;
      if ((window && v > kMostWindowMs) || (duration && v > kMostDurationMs)) {
        throw std::invalid_argument("parameter " + name + " must be at most " +
                                    std::to_string(static_cast<int>(window ? kMostWindowMs : kMostDurationMs)) + " ms");
      }
      field = v;
    };
    return *this;
  }
  std::map<std::string, std::function<void(double)>> setters_;
};

VelocityMethod velocity_method(const std::string& name) {
  if (name == "savitzky_golay") return VelocityMethod::savitzky_golay;
  if (name == "moving_average_5") return VelocityMethod::moving_average;
  if (name == "two_point") return VelocityMethod::two_point;
  throw std::invalid_argument("velocity must be savitzky_golay, moving_average_5 or two_point, not " + name);
}

// A parameter that turns a rule on (1) or off (0).
void check_switch(const std::string& name, double v) {
  if (v != 0 && v != 1) throw std::invalid_argument("parameter " + name + " must be 0 (off) or 1 (on)");
}

}  // namespace

std::vector<std::string> detector_names() { return {"ivt", "idt", "engbert_kliegl", "nystrom_holmqvist"}; }

std::unique_ptr<EventDetector> make_detector(const DetectionSpec& spec) {
  if (spec.method == "ivt") {
    VelocityThresholdParams p;
    p.velocity.method = velocity_method(spec.velocity);
    Binder().positive("velocity_threshold_deg_s", p.velocity_threshold_deg_s)
        .positive("sg_window_ms", p.velocity.sg_window_ms)
        .whole("sg_order", p.velocity.sg_order)
        .non_negative("onset_sd_factor", p.onset_sd_factor)
        .non_negative("offset_onset_weight", p.offset_onset_weight)
        .positive("local_noise_window_ms", p.local_noise_window_ms)
        .non_negative("max_glissade_ms", p.max_glissade_ms)
        .non_negative("glissades", p.glissades)
        .apply(spec.method, spec.parameters);
    if (p.offset_onset_weight > 1) throw std::invalid_argument("parameter offset_onset_weight must be between 0 and 1");
    check_switch("glissades", p.glissades);
    return std::make_unique<VelocityThresholdDetector>(p);
  }
  if (spec.velocity != "savitzky_golay") {
    throw std::invalid_argument("velocity is chosen only for ivt; " + spec.method + " uses its published differentiator");
  }
  if (spec.method == "idt") {
    DispersionThresholdParams p;
    Binder().non_negative("dispersion_threshold_deg", p.dispersion_threshold_deg)
        .positive("min_duration_ms", p.min_duration_ms)
        .non_negative("smoothing_window_ms", p.smoothing_window_ms)
        .positive("dispersion_median_factor", p.dispersion_median_factor)
        .apply(spec.method, spec.parameters);
    return std::make_unique<DispersionThresholdDetector>(p);
  }
  if (spec.method == "engbert_kliegl") {
    EngbertKlieglParams p;
    Binder().positive("lambda", p.lambda)
        .whole("min_saccade_samples", p.min_saccade_samples)
        .non_negative("velocity_window_ms", p.velocity_window_ms)
        .non_negative("onset_sd_factor", p.onset_sd_factor)
        .non_negative("offset_onset_weight", p.offset_onset_weight)
        .positive("local_noise_window_ms", p.local_noise_window_ms)
        .non_negative("max_glissade_ms", p.max_glissade_ms)
        .non_negative("glissades", p.glissades)
        .apply(spec.method, spec.parameters);
    if (p.offset_onset_weight > 1) throw std::invalid_argument("parameter offset_onset_weight must be between 0 and 1");
    check_switch("glissades", p.glissades);
    return std::make_unique<EngbertKlieglDetector>(p);
  }
  if (spec.method == "nystrom_holmqvist") {
    NystromHolmqvistParams p;
    Binder().positive("initial_peak_threshold_deg_s", p.initial_peak_threshold_deg_s)
        .positive("peak_sd_factor", p.peak_sd_factor)
        .positive("onset_sd_factor", p.onset_sd_factor)
        .positive("max_velocity_deg_s", p.max_velocity_deg_s)
        .positive("max_acceleration_deg_s2", p.max_acceleration_deg_s2)
        .positive("local_noise_window_ms", p.local_noise_window_ms)
        .non_negative("offset_onset_weight", p.offset_onset_weight)
        .non_negative("max_glissade_ms", p.max_glissade_ms)
        .positive("min_saccade_ms", p.min_saccade_ms)
        .positive("sg_window_ms", p.velocity.sg_window_ms)
        .whole("sg_order", p.velocity.sg_order)
        .apply(spec.method, spec.parameters);
    if (p.offset_onset_weight > 1) throw std::invalid_argument("parameter offset_onset_weight must be between 0 and 1");
    return std::make_unique<NystromHolmqvistDetector>(p);
  }
  std::string known;
  for (const auto& n : detector_names()) known += (known.empty() ? "" : ", ") + n;
  throw std::invalid_argument("unknown detection method " + spec.method + "; known: " + known);
}

BlinkParams blink_params(const DetectionSpec& s) {
  return {s.blink_min_ms, s.blink_max_ms, s.blink_padding_before_ms, s.blink_padding_after_ms};
}

EventParams event_params(const DetectionSpec& s) {
  EventParams p;
  p.min_fixation_ms = s.min_fixation_ms;
  p.min_saccade_ms = s.min_saccade_ms;
  p.max_velocity_deg_s = s.max_velocity_deg_s;
  p.max_fixation_gap_ms = s.max_fixation_gap_ms;
  p.max_fixation_gap_shift_deg = s.max_fixation_gap_shift_deg;
  p.pso = s.pso;
  p.pursuit = {s.pursuit_dispersion_deg, s.pursuit_window_ms};
  return p;
}

}  // namespace gazemill
