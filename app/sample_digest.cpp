#include "app/sample_digest.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <span>

#include "detectors/visual_angle.h"
#include "measures/data_quality.h"

namespace gazemill {
namespace {

bool without_gaze(const SampleColumns& s, std::size_t i) { return !((s.has_left && s.left.valid[i]) || (s.has_right && s.right.valid[i])); }

// Rows [first, last) of the samples that fall in [from, to), within [lo, hi).
std::pair<std::size_t, std::size_t> sample_range(const std::vector<Microseconds>& t, std::size_t lo, std::size_t hi, Microseconds from,
                                                 Microseconds to) {
  const auto a = std::lower_bound(t.begin() + static_cast<std::ptrdiff_t>(lo), t.begin() + static_cast<std::ptrdiff_t>(hi), from);
  const auto b = std::lower_bound(a, t.begin() + static_cast<std::ptrdiff_t>(hi), to);
  return {static_cast<std::size_t>(a - t.begin()), static_cast<std::size_t>(b - t.begin())};
}

// Precision of each fixation, in the eye it was detected in (both averaged
// where detection averaged them), from the samples converted as detection
// converts them (average of the eyes in pixels, then degrees), into buffers
// kept from fixation to fixation.
void add_precision(SampleDigest& d, const SampleColumns& s, std::size_t lo, std::size_t hi, const VisualAngle& angle,
                   const std::vector<FixationEvent>& fixations, EyeChoice choice) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  std::vector<double> x_deg, y_deg;
  std::vector<std::uint8_t> valid;
  for (const auto& f : fixations) {
    const auto [first, last] = sample_range(s.time_us, lo, hi, f.start_us, f.end_us);
    if (last <= first + 1) continue;
    const std::size_t n = last - first;
    x_deg.resize(n);
    y_deg.resize(n);
    valid.resize(n);
    if (choice == EyeChoice::average && s.has_left && s.has_right) {
      for (std::size_t i = 0; i < n; ++i) {
        const std::size_t k = first + i;
        valid[i] = s.left.valid[k] && s.right.valid[k];
        x_deg[i] = valid[i] ? angle.x_deg(0.5 * (static_cast<double>(s.left.x_px[k]) + static_cast<double>(s.right.x_px[k]))) : kNaN;
        y_deg[i] = valid[i] ? angle.y_deg(0.5 * (static_cast<double>(s.left.y_px[k]) + static_cast<double>(s.right.y_px[k]))) : kNaN;
      }
    } else {
      Eye eye = choice == EyeChoice::left ? Eye::left : choice == EyeChoice::right ? Eye::right : f.eye;
      if (eye == Eye::left && !s.has_left) eye = Eye::right;
      if (eye == Eye::right && !s.has_right) eye = Eye::left;
      const EyeSamples& e = s.eye(eye);
      for (std::size_t i = 0; i < n; ++i) {
        const std::size_t k = first + i;
        valid[i] = e.valid[k];
        x_deg[i] = valid[i] ? angle.x_deg(e.x_px[k]) : kNaN;
        y_deg[i] = valid[i] ? angle.y_deg(e.y_px[k]) : kNaN;
      }
    }
    const FixationPrecision p = fixation_precision(x_deg, y_deg, valid);
    if (p.intervals == 0) continue;
    d.fixation_rms_s2s_deg.push_back(p.rms_s2s_deg);
    d.fixation_std_deg.push_back(p.std_deg);
  }
}

TrialTimeCourse time_course(const SampleColumns& s, std::size_t lo, std::size_t hi, const Trial& t, double interval_us,
                            const DigestSettings& settings) {
  TrialTimeCourse out;
  const auto span = static_cast<double>(t.end_us - t.start_us);
  if (span <= 0) return out;
  double bin_us = std::max(interval_us, span / static_cast<double>(std::max<std::size_t>(settings.max_points_per_trial, 1)));
  bin_us = std::ceil(bin_us / 1000.0) * 1000.0;  // whole milliseconds
  out.bin_ms = bin_us / 1000.0;
  // The eye drawn: the one detection used where both were recorded.
  Eye shown = s.has_left ? Eye::left : Eye::right;
  if (s.has_left && s.has_right && settings.eye == EyeChoice::right) shown = Eye::right;
  const auto& e = s.eye(shown);
  const auto b = static_cast<Microseconds>(bin_us);
  const std::span<const Microseconds> time(s.time_us.data() + lo, hi - lo);
  const auto xs = bin_means(time, std::span<const float>(e.x_px.data() + lo, hi - lo), std::span<const std::uint8_t>(e.valid.data() + lo, hi - lo),
                            t.start_us, t.end_us + 1, b);
  const auto ys = bin_means(time, std::span<const float>(e.y_px.data() + lo, hi - lo), std::span<const std::uint8_t>(e.valid.data() + lo, hi - lo),
                            t.start_us, t.end_us + 1, b);
  // Drawn at whole pixels: kept so, the stored digest is a fraction of the
  // size of the unrounded means and compresses several times quicker.
  // Rounded as a float, as the page rounds it, so that the page is the same
  // whether a digest or the samples drew it.
  auto whole_px = [](double v) {
    const auto f = static_cast<float>(v);
    return std::isfinite(f) ? std::round(f) : std::numeric_limits<float>::quiet_NaN();
  };
  out.x_px.reserve(xs.size());
  out.y_px.reserve(ys.size());
  for (double v : xs) out.x_px.push_back(whole_px(v));
  for (double v : ys) out.y_px.push_back(whole_px(v));
  return out;
}

}  // namespace

std::uint64_t samples_without_gaze(const SampleColumns& s) {
  std::uint64_t n = 0;
  for (std::size_t i = 0; i < s.size(); ++i) n += without_gaze(s, i);
  return n;
}

void digest_trial(SampleDigest& d, const SampleColumns& s, std::size_t first, std::size_t last, const Trial& trial, const VisualAngle& angle,
                  double sample_rate_hz, const std::vector<FixationEvent>* fixations, const DigestSettings& settings) {
  d.max_points_per_trial = settings.max_points_per_trial;
  d.trial_samples += last - first;
  for (std::size_t i = first; i < last; ++i) d.trial_missing_samples += without_gaze(s, i);
  if (last >= first + 2) {
    const SamplingRegularity r = sampling_regularity(std::span<const Microseconds>(s.time_us.data() + first, last - first));
    d.intervals += r.intervals;
    d.irregular_intervals += r.irregular_intervals;
    d.gaps += r.gaps;
    d.non_increasing += r.non_increasing;
    d.longest_gap_us = std::max(d.longest_gap_us, r.longest_gap_us);
    if (std::isfinite(r.measured_rate_hz)) d.trial_rates_hz.push_back(r.measured_rate_hz);
    if (std::isfinite(r.interval_sd_us)) {
      const std::uint64_t regular = r.intervals - r.gaps - r.non_increasing;
      d.interval_variance_sum_us2 += r.interval_sd_us * r.interval_sd_us * static_cast<double>(regular);
      d.regular_intervals += regular;
    }
  }
  if (fixations) add_precision(d, s, first, last, angle, *fixations, settings.eye);
  const double interval_us = sample_rate_hz > 0 ? 1e6 / sample_rate_hz : 1000.0;
  d.time_courses.push_back(time_course(s, first, last, trial, interval_us, settings));
}

SampleDigest digest_recording(const Recording& rec, const DetectedEvents* events, const DigestSettings& settings) {
  SampleDigest d;
  d.max_points_per_trial = settings.max_points_per_trial;
  const SampleColumns& s = rec.samples;
  d.samples = s.size();
  d.missing_samples = samples_without_gaze(s);
  std::vector<FixationEvent> of_trial;
  const VisualAngle angle(rec.screen);
  for (const Trial& trial : rec.trials) {
    const auto [first, last] = sample_range(s.time_us, 0, s.size(), trial.start_us, trial.end_us + 1);
    if (events) {
      of_trial.clear();
      for (const auto& f : events->fixations) {
        if (f.trial == trial.id) of_trial.push_back(f);
      }
    }
    digest_trial(d, s, first, last, trial, angle, rec.sample_rate_hz, events ? &of_trial : nullptr, settings);
  }
  return d;
}

}  // namespace gazemill
