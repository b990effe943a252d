#include "detectors/saccade_refinement.h"

#include <algorithm>
#include <cmath>

namespace gazemill {

std::vector<SaccadeCore> cores_above(const std::vector<double>& s, const std::vector<bool>& usable, double threshold) {
  std::vector<SaccadeCore> cores;
  const std::size_t n = s.size();
  std::size_t i = 0;
  while (i < n) {
    if (!(usable[i] && s[i] > threshold)) {
      ++i;
      continue;
    }
    std::size_t j = i;
    while (j + 1 < n && usable[j + 1] && s[j + 1] > threshold) ++j;
    cores.push_back({i, j});
    i = j + 1;
  }
  return cores;
}

SpeedSpread speed_spread_below(const std::vector<double>& s, const std::vector<bool>& usable, double below) {
  double sum = 0, sum2 = 0;
  std::size_t k = 0;
  for (std::size_t i = 0; i < s.size(); ++i) {
    if (usable[i] && s[i] < below) {
      sum += s[i];
      sum2 += s[i] * s[i];
      ++k;
    }
  }
  SpeedSpread out;
  out.samples = k;
  if (k == 0) return out;
  out.mean_deg_s = sum / static_cast<double>(k);
  out.sd_deg_s = std::sqrt(std::max(0.0, sum2 / static_cast<double>(k) - out.mean_deg_s * out.mean_deg_s));
  return out;
}

void refine_saccades(const GazeTrace& g, const std::vector<double>& s, const std::vector<bool>& usable,
                     const std::vector<SaccadeCore>& cores, const SaccadeRefinementParams& p, std::vector<SampleLabel>& out) {
  const std::size_t n = s.size();
  const double onset = p.onset_threshold_deg_s;
  const auto samples = [&](double ms) { return static_cast<std::size_t>(std::max(1.0, std::round(ms * 1000.0 / g.interval_us))); };
  const std::size_t noise_window = samples(p.local_noise_window_ms);
  // 0 ms turns glissade labelling off (samples() would round it up to one).
  const std::size_t glissade_window = p.max_glissade_ms > 0 ? samples(p.max_glissade_ms) : 0;
  std::size_t last_end = 0;  // nothing before this belongs to the next saccade
  std::size_t next = 0;      // the first sample a new core may start at
  for (SaccadeCore core : cores) {
    // A core inside the saccade or glissade before it belongs to it; one that
    // reaches past its end starts where that ends.
    if (core.last < next) continue;
    core.first = std::max(core.first, next);
    const std::size_t peak_end = core.last;
    // Onset: back to the first sample below the onset threshold, which is
    // still at rest; the saccade starts after it. Nystrom & Holmqvist walk on
    // to the local minimum below the threshold (from memory), but before a
    // saccade the eye is at rest: a smoothed velocity keeps falling for up to
    // half a filter's length before the movement began, and its minimum lies
    // there or in the noise. On the hand-coded recordings of Andersson et al.
    // (2017) that put onsets 5.3 ms early on average (0.0 ms this way); on the
    // simulator grid kappa rose in 16 of 20 cells.
    std::size_t a = core.first;
    while (p.walk_boundaries && a > last_end && usable[a - 1] && s[a - 1] >= onset) --a;
    const std::size_t first = a;
    // Offset threshold from the noise just before the saccade.
    double m = 0, m2 = 0;
    std::size_t k = 0;
    for (std::size_t q = a > noise_window ? a - noise_window : 0; q < a; ++q) {
      if (usable[q]) {
        m += s[q];
        m2 += s[q] * s[q];
        ++k;
      }
    }
    double local = onset;
    if (k > 1) {
      const double mean = m / static_cast<double>(k);
      local = mean + 3.0 * std::sqrt(std::max(0.0, m2 / static_cast<double>(k) - mean * mean));
    }
    const double offset = p.offset_onset_weight * onset + (1.0 - p.offset_onset_weight) * local;
    // Offset: forward to the first local minimum below the offset threshold;
    // the minimum is again the first sample at rest, not part of the saccade.
    std::size_t b = peak_end;
    auto minimum_after = [&](std::size_t q) { return q + 1 < n && usable[q + 1] && s[q] < offset && s[q + 1] >= s[q]; };
    while (b + 1 < n && usable[b + 1] && !minimum_after(b)) ++b;
    const std::size_t last = !p.walk_boundaries ? peak_end : minimum_after(b) && b > first ? b - 1 : b;
    if ((static_cast<double>(g.time_us[last] - g.time_us[first]) + g.interval_us) / 1000.0 >= p.min_saccade_ms) {
      for (std::size_t q = first; q <= last; ++q) out[q] = SampleLabel::saccade;
      // Glissade: a velocity bump above the offset threshold soon after the
      // offset. It runs from the saccade's end to the next local minimum,
      // which again is at rest. A bump that runs into lost data is no
      // glissade: velocity fitted at the edge of a stretch is noisy, and a
      // single lost sample (a removed spike) would otherwise turn the
      // fixation before it into a glissade.
      std::size_t last_above = b;
      for (std::size_t q = b + 1; q < n && q <= b + glissade_window && usable[q]; ++q) {
        if (s[q] > offset) last_above = q;
      }
      bool glissade = false;
      if (last_above > b) {
        std::size_t e = last_above;
        while (e + 1 < n && usable[e + 1] && !minimum_after(e)) ++e;
        if (minimum_after(e)) {
          for (std::size_t q = last + 1; q < e; ++q) out[q] = SampleLabel::pso;  // e, the minimum, is at rest
          b = e;
          glissade = true;
        }
      }
      // Without a glissade the method's own saccade end stands, and the next
      // saccade may start right after it.
      if (!p.walk_boundaries && !glissade) b = peak_end;
    } else if (!p.walk_boundaries) {
      b = peak_end;
    }
    last_end = b + 1;
    next = std::max(peak_end, b) + 1;
  }
}

}  // namespace gazemill
