#include "detectors/event_detector.h"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "detectors/median.h"
#include "detectors/nystrom_holmqvist_detector.h"
#include "detectors/timestamp_gaps.h"
#include "detectors/velocity.h"

namespace gazemill {
namespace {

// Calls f(begin, end, label) for each run of equal labels.
template <typename F>
void for_each_run(const std::vector<SampleLabel>& labels, F&& f) {
  std::size_t i = 0;
  while (i < labels.size()) {
    std::size_t j = i + 1;
    while (j < labels.size() && labels[j] == labels[i]) ++j;
    f(i, j, labels[i]);
    i = j;
  }
}

// Whether hypot(dx, dy) > limit, with hypot's own answer to the last bit:
// the squares decide when they are clearly apart (computed dx^2 + dy^2 is
// within a few units in the last place, far inside the 1e-9 margin), and
// hypot itself decides near the limit. Most samples are far from any
// limit, and hypot costs several times a multiply-add.
bool longer_than(double dx, double dy, double limit) {
  const double d2 = dx * dx + dy * dy, l2 = limit * limit;
  if (l2 > 1e-280 && l2 < 1e280) {  // squares far from underflow and overflow
    if (d2 < l2 * (1.0 - 1e-9)) return false;
    if (d2 > l2 * (1.0 + 1e-9)) return true;
  }
  return std::hypot(dx, dy) > limit;
}

double run_ms(const GazeTrace& g, std::size_t a, std::size_t b) {
  // A run covers its samples: from the first sample to one interval after the last.
  return (static_cast<double>(g.time_us[b - 1] - g.time_us[a]) + g.interval_us) / 1000.0;
}

}  // namespace

double fixation_speed_level(const GazeTrace& g, std::vector<double>* speed_out) {
  VelocityParams vp;
  vp.sg_window_ms = kBlinkVelocityWindowMs;
  vp.with_components = false;
  Velocity v = compute_velocity(g, vp);
  std::vector<bool> usable(g.size());
  for (std::size_t i = 0; i < g.size(); ++i) usable[i] = std::isfinite(v.speed[i]);
  const PeakThreshold pt = find_peak_threshold(v.speed, usable, NystromHolmqvistParams{});
  if (speed_out) *speed_out = std::move(v.speed);
  return pt.mean_deg_s + NystromHolmqvistParams{}.onset_sd_factor * pt.sd_deg_s;
}

std::vector<SampleLabel> label_missing(const GazeTrace& g, const BlinkParams& p) {
  const std::size_t n = g.size();
  std::vector<SampleLabel> labels(n, SampleLabel::other);
  bool any_loss = false, any_pupil = false;
  for (std::size_t i = 0; i < n; ++i) {
    if (!g.valid[i]) labels[i] = SampleLabel::loss, any_loss = true;
    any_pupil = any_pupil || std::isfinite(g.pupil[i]);
  }
  if (any_loss) {
    // The lid artefacts around a blink: samples on either side of the lost
    // ones that move faster than the eye does in a fixation (the onset
    // threshold of Nystrom & Holmqvist 2010, mean + 3 SD of the velocities
    // below their peak threshold, from memory), lost samples among them and
    // samples whose velocity window is broken, up to the paddings.
    std::vector<double> speed;
    const double level = fixation_speed_level(g, &speed);
    const auto moving = [&](std::size_t k) { return !g.valid[k] || !(speed[k] <= level); };
    const auto grow = [&](std::size_t a, std::size_t b) {
      const Microseconds from = g.time_us[a] - static_cast<Microseconds>(p.padding_before_ms * 1000.0);
      const Microseconds to = g.time_us[b - 1] + static_cast<Microseconds>(p.padding_after_ms * 1000.0);
      std::size_t lo = a, hi = b;
      while (lo > 0 && g.time_us[lo - 1] >= from && moving(lo - 1)) --lo;
      while (hi < n && g.time_us[hi] <= to && moving(hi)) ++hi;
      return std::pair<std::size_t, std::size_t>{lo, hi};
    };
    std::size_t next = 0;  // samples before this already belong to a blink
    for_each_run(labels, [&](std::size_t a, std::size_t b, SampleLabel l) {
      if (l != SampleLabel::loss || a < next) return;
      bool blink = false;
      std::pair<std::size_t, std::size_t> span{a, b};
      if (any_pupil) {
        // With a pupil signal, a blink hides the pupil: the gap, counted from
        // the last sample before to the first sample after, is the blink.
        const Microseconds before = a > 0 ? g.time_us[a - 1] : g.time_us[a];
        const Microseconds after = b < n ? g.time_us[b] : g.time_us[b - 1];
        const double gap_ms = static_cast<double>(after - before) / 1000.0;
        bool pupil_lost = true;
        for (std::size_t k = a; k < b && pupil_lost; ++k) pupil_lost = std::isnan(g.pupil[k]);
        blink = pupil_lost && gap_ms >= p.blink_min_ms && gap_ms <= p.blink_max_ms;
        if (blink) span = grow(a, b);
      } else {
        // Without one, the lost samples and the lid artefacts around them
        // (often lost in pieces) are the blink, and their span is measured.
        span = grow(a, b);
        const double span_ms = (static_cast<double>(g.time_us[span.second - 1] - g.time_us[span.first]) + g.interval_us) / 1000.0;
        blink = span_ms >= p.blink_min_ms && span_ms <= p.blink_max_ms;
      }
      if (!blink) return;
      for (std::size_t k = span.first; k < span.second; ++k) labels[k] = SampleLabel::blink;
      next = span.second;
    });
  }
  // Samples dropped without a mark leave only a gap in the timestamps. The
  // sample after such a gap stands for the samples lost in it, so the rules
  // for lost data apply there too: no saccade glued to it, and fixations
  // joined across it only when the gap is short and the eye stayed put.
  for (std::size_t i = 1; i < g.size(); ++i) {
    if (labels[i] == SampleLabel::other && is_gap_step(g.time_us.data(), g.size(), i, g.interval_us, kDefaultMaxGapFactor)) {
      labels[i] = SampleLabel::loss;
    }
  }
  return labels;
}

void tidy_labels(const GazeTrace& g, const EventParams& p, std::vector<SampleLabel>& labels) {
  // Pursuit is split off the detector's fixation samples before the
  // fixation rules below see them: a pursuit sample is no fixation sample,
  // neither for the minimum duration nor for bridging gaps.
  label_pursuit(g, p.pursuit, labels);
  auto is_gap = [&](std::size_t i) { return labels[i] == SampleLabel::blink || labels[i] == SampleLabel::loss; };
  // A post-saccadic oscillation only follows a saccade.
  const auto orphan_pso = [&] {
    for_each_run(labels, [&](std::size_t a, std::size_t b, SampleLabel l) {
      if (l == SampleLabel::pso && (a == 0 || labels[a - 1] != SampleLabel::saccade)) {
        std::fill(labels.begin() + static_cast<std::ptrdiff_t>(a), labels.begin() + static_cast<std::ptrdiff_t>(b), SampleLabel::other);
      }
    });
  };
  orphan_pso();
  // Folded into the saccade before it, the oscillation counts towards the
  // saccade's noise and duration checks; into the fixation after it, towards
  // the minimum fixation.
  if (p.pso != PsoHandling::separate) {
    const SampleLabel into = p.pso == PsoHandling::fixation ? SampleLabel::fixation : SampleLabel::saccade;
    std::replace(labels.begin(), labels.end(), SampleLabel::pso, into);
  }
  // Saccades: too fast (noise), glued to missing data (lid or loss artefacts), or too short.
  std::vector<std::pair<std::size_t, std::size_t>> runs;
  for_each_run(labels, [&](std::size_t a, std::size_t b, SampleLabel l) {
    if (l == SampleLabel::saccade) runs.emplace_back(a, b);
  });
  for (const auto& [a, b] : runs) {
    // Sample-to-sample speed inside the run: faster than the eye can move is noise.
    bool noise = false;
    for (std::size_t k = a + 1; k < b && !noise && p.max_velocity_deg_s > 0; ++k) {
      const double dt = static_cast<double>(g.time_us[k] - g.time_us[k - 1]) * 1e-6;
      noise = longer_than(g.x_deg[k] - g.x_deg[k - 1], g.y_deg[k] - g.y_deg[k - 1], p.max_velocity_deg_s * dt);
    }
    const bool glued = (a > 0 && is_gap(a - 1)) || (b < labels.size() && is_gap(b));
    if (noise || glued) {
      std::fill(labels.begin() + static_cast<std::ptrdiff_t>(a), labels.begin() + static_cast<std::ptrdiff_t>(b), SampleLabel::other);
    } else if (run_ms(g, a, b) < p.min_saccade_ms) {
      const bool inside = a > 0 && b < labels.size() && labels[a - 1] == SampleLabel::fixation && labels[b] == SampleLabel::fixation;
      std::fill(labels.begin() + static_cast<std::ptrdiff_t>(a), labels.begin() + static_cast<std::ptrdiff_t>(b),
                inside ? SampleLabel::fixation : SampleLabel::other);
    }
  }
  orphan_pso();
  // A fixation goes on across a short gap of lost or unusable samples.
  for (std::size_t a = 1; a < labels.size(); ++a) {
    const auto gap_label = [&](std::size_t k) { return labels[k] == SampleLabel::loss || labels[k] == SampleLabel::other; };
    if (!gap_label(a) || labels[a - 1] != SampleLabel::fixation) continue;
    std::size_t b = a;
    while (b < labels.size() && gap_label(b)) ++b;
    if (b < labels.size() && labels[b] == SampleLabel::fixation &&
        static_cast<double>(g.time_us[b] - g.time_us[a - 1]) / 1000.0 <= p.max_fixation_gap_ms + g.interval_us / 1000.0 &&
        std::hypot(g.x_deg[b] - g.x_deg[a - 1], g.y_deg[b] - g.y_deg[a - 1]) <= p.max_fixation_gap_shift_deg) {
      std::fill(labels.begin() + static_cast<std::ptrdiff_t>(a), labels.begin() + static_cast<std::ptrdiff_t>(b), SampleLabel::fixation);
    }
    a = b;
  }
  // Fixations too short to count.
  for_each_run(labels, [&](std::size_t a, std::size_t b, SampleLabel l) {
    if (l == SampleLabel::fixation && run_ms(g, a, b) < p.min_fixation_ms) {
      std::fill(labels.begin() + static_cast<std::ptrdiff_t>(a), labels.begin() + static_cast<std::ptrdiff_t>(b), SampleLabel::other);
    }
  });
}

std::size_t remove_spikes(GazeTrace& g, double spike_deg) {
  if (spike_deg <= 0 || g.size() < 3) return 0;
  std::vector<std::size_t> spikes;
  for (std::size_t i = 1; i + 1 < g.size(); ++i) {
    if (!g.valid[i - 1] || !g.valid[i] || !g.valid[i + 1]) continue;
    const double mx = 0.5 * (g.x_deg[i - 1] + g.x_deg[i + 1]), my = 0.5 * (g.y_deg[i - 1] + g.y_deg[i + 1]);
    if (!longer_than(g.x_deg[i] - mx, g.y_deg[i] - my, spike_deg)) continue;  // most samples
    const double off = std::hypot(g.x_deg[i] - mx, g.y_deg[i] - my);
    const double span = std::hypot(g.x_deg[i + 1] - g.x_deg[i - 1], g.y_deg[i + 1] - g.y_deg[i - 1]);
    if (span < 0.5 * off) spikes.push_back(i);
  }
  for (std::size_t i : spikes) {
    g.valid[i] = 0;
    g.x_deg[i] = g.y_deg[i] = g.x_px[i] = g.y_px[i] = std::nan("");
  }
  return spikes.size();
}

std::vector<SampleLabel> label_trace(const GazeTrace& g, const EventDetector& d, const BlinkParams& bp, const EventParams& ep,
                                     ParameterList* fitted) {
  std::vector<SampleLabel> labels = label_missing(g, bp);
  ParameterList set = d.label(g, labels);
  if (fitted) *fitted = std::move(set);
  tidy_labels(g, ep, labels);
  return labels;
}

void collect_events(const GazeTrace& g, const std::vector<SampleLabel>& labels, const std::string& trial, Eye eye,
                    DetectedEvents& out) {
  const auto end_of = [&](std::size_t b) { return g.time_us[b - 1] + static_cast<Microseconds>(std::llround(g.interval_us)); };
  // Peak velocity from the default Savitzky-Golay differentiator, whatever the
  // detector used, computed on each saccade and the samples around it only.
  const VelocityParams peak_params;
  const std::size_t margin = static_cast<std::size_t>(savitzky_golay_window_samples(peak_params, g.interval_us));
  auto peak_velocity = [&](std::size_t a, std::size_t b) {
    const std::size_t lo = a > margin ? a - margin : 0, hi = std::min(g.size(), b + margin);
    GazeTrace part;
    part.interval_us = g.interval_us;
    part.time_us.assign(g.time_us.begin() + static_cast<std::ptrdiff_t>(lo), g.time_us.begin() + static_cast<std::ptrdiff_t>(hi));
    part.x_deg.assign(g.x_deg.begin() + static_cast<std::ptrdiff_t>(lo), g.x_deg.begin() + static_cast<std::ptrdiff_t>(hi));
    part.y_deg.assign(g.y_deg.begin() + static_cast<std::ptrdiff_t>(lo), g.y_deg.begin() + static_cast<std::ptrdiff_t>(hi));
    part.valid.assign(g.valid.begin() + static_cast<std::ptrdiff_t>(lo), g.valid.begin() + static_cast<std::ptrdiff_t>(hi));
    const Velocity v = compute_velocity(part, peak_params);
    double peak = 0;
    for (std::size_t k = a; k < b; ++k) {
      if (std::isfinite(v.speed[k - lo])) peak = std::max(peak, v.speed[k - lo]);
    }
    return peak;
  };
  for_each_run(labels, [&](std::size_t a, std::size_t b, SampleLabel l) {
    if (l == SampleLabel::fixation) {
      FixationEvent f;
      f.trial = trial;
      f.eye = eye;
      f.start_us = g.time_us[a];
      f.end_us = end_of(b);
      std::vector<double> xs, ys;
      double sx = 0, sy = 0, sxd = 0, syd = 0;
      double x_lo = 1e300, x_hi = -1e300, y_lo = 1e300, y_hi = -1e300;
      double pupil_sum = 0;
      std::size_t pupils = 0;
      for (std::size_t k = a; k < b; ++k) {
        if (!g.valid[k]) continue;  // a bridged gap adds time, not position
        if (k < g.pupil.size() && std::isfinite(g.pupil[k])) {
          pupil_sum += g.pupil[k];
          ++pupils;
        }
        xs.push_back(g.x_px[k]);
        ys.push_back(g.y_px[k]);
        sx += g.x_px[k];
        sy += g.y_px[k];
        sxd += g.x_deg[k];
        syd += g.y_deg[k];
        x_lo = std::min(x_lo, g.x_deg[k]);
        x_hi = std::max(x_hi, g.x_deg[k]);
        y_lo = std::min(y_lo, g.y_deg[k]);
        y_hi = std::max(y_hi, g.y_deg[k]);
      }
      const double n = static_cast<double>(xs.size());
      f.x_px = sx / n;
      f.y_px = sy / n;
      f.x_deg = sxd / n;
      f.y_deg = syd / n;
      f.x_median_px = median_in_place(xs);
      f.y_median_px = median_in_place(ys);
      f.dispersion_deg = (x_hi - x_lo) + (y_hi - y_lo);
      if (pupils) f.pupil = pupil_sum / static_cast<double>(pupils);
      out.fixations.push_back(f);
    } else if (l == SampleLabel::saccade) {
      SaccadeEvent s;
      s.trial = trial;
      s.eye = eye;
      s.start_us = g.time_us[a];
      s.end_us = end_of(b);
      s.start_x_px = g.x_px[a];
      s.start_y_px = g.y_px[a];
      s.end_x_px = g.x_px[b - 1];
      s.end_y_px = g.y_px[b - 1];
      const double dx = g.x_deg[b - 1] - g.x_deg[a], dy = g.y_deg[b - 1] - g.y_deg[a];
      s.amplitude_deg = std::hypot(dx, dy);
      s.direction_deg = std::atan2(dy, dx) * 180.0 / std::numbers::pi;
      s.peak_velocity_deg_s = peak_velocity(a, b);
      out.saccades.push_back(s);
    } else if (l == SampleLabel::blink) {
      out.blinks.push_back({trial, eye, g.time_us[a], end_of(b)});
    }
  });
}

}  // namespace gazemill
