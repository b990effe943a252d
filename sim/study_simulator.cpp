#include "sim/study_simulator.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>
#include <random>

#include "detectors/visual_angle.h"

namespace gazemill::sim {
namespace {

constexpr float kNaN = std::numeric_limits<float>::quiet_NaN();

// Position along a saccade as a share of its amplitude, tau in [0, 1].
double saccade_profile(SaccadeProfile profile, double tau) {
  if (profile == SaccadeProfile::minimum_jerk) {
    // Flash & Hogan (1985): very slow start and end, peak velocity 1.875 x mean.
    return tau * tau * tau * (10.0 - 15.0 * tau + 6.0 * tau * tau);
  }
  // Half-sine velocity: peak velocity pi/2 x mean, moving from the first millisecond.
  return 0.5 * (1.0 - std::cos(M_PI * tau));
}

struct Segment {
  enum class Kind { fixation, saccade, pso, blink, loss } kind;
  Microseconds start_us, end_us;
  double x0, y0, x1, y1;  // true screen position at start and end (px)
};

class TrialRenderer {
 public:
  TrialRenderer(const SimulationConfig& cfg, std::mt19937_64& rng)
      : cfg_(cfg), sig_(cfg.signal), angle_(cfg.screen), rng_(rng),
        ppd_(angle_.pixels_per_degree_at_centre()),
        // White noise with per-axis SD s gives RMS sample-to-sample distance 2 s (two axes, independent samples).
        noise_sd_px_(sig_.noise_rms_s2s_deg / 2.0 * ppd_),
        step_us_(static_cast<Microseconds>(std::llround(1e6 / sig_.sample_rate_hz))) {}

  Microseconds step_us() const { return step_us_; }

  // Appends the trial's samples from `t0` and returns the time after its last sample.
  Microseconds render(const std::vector<Segment>& segments, const TrialDrift& drift, Microseconds t0,
                      SampleColumns& out, std::vector<SampleLabel>& labels) {
    std::normal_distribution<double> noise(0.0, noise_sd_px_);
    std::uniform_real_distribution<double> pupil_walk(-2.0, 2.0);
    const Microseconds end = segments.back().end_us;
    std::size_t s = 0;
    Microseconds t = t0;
    for (; t < end; t += step_us_) {
      while (s + 1 < segments.size() && t >= segments[s].end_us) ++s;
      const Segment& g = segments[s];
      const double tau = g.end_us > g.start_us ? std::clamp(double(t - g.start_us) / double(g.end_us - g.start_us), 0.0, 1.0) : 1.0;
      double x = g.x0, y = g.y0;
      double pupil = pupil_ = std::clamp(pupil_ + pupil_walk(rng_), 900.0, 1500.0);
      bool missing = false;
      SampleLabel label = SampleLabel::fixation;
      switch (g.kind) {
        case Segment::Kind::fixation:
          break;
        case Segment::Kind::saccade: {
          const double m = saccade_profile(sig_.saccade_profile, tau);
          x = g.x0 + (g.x1 - g.x0) * m;
          y = g.y0 + (g.y1 - g.y0) * m;
          label = SampleLabel::saccade;
          break;
        }
        case Segment::Kind::pso: {
          // A damped wobble around the landing point, opposite to the saccade's direction first.
          const double ms = double(t - g.start_us) / 1000.0;
          const double dir = g.x1 >= g.x0 ? 1.0 : -1.0;
          const double a = sig_.pso_amplitude_deg * ppd_ * std::exp(-ms / (sig_.pso_duration_ms / 3.0));
          x = g.x1 + dir * a * std::cos(2.0 * M_PI * ms / (sig_.pso_duration_ms / 1.5));
          y = g.y1;
          label = SampleLabel::pso;
          break;
        }
        case Segment::Kind::blink: {
          // Lid artefacts: the tracked pupil is pushed down and shrinks before the gap
          // and recovers after it; in between nothing is tracked.
          const double lid = sig_.lid_artefact_ms * 1000.0;
          const double since = double(t - g.start_us), until = double(g.end_us - t);
          label = SampleLabel::blink;
          if (since < lid || until < lid) {
            const double depth = 1.0 - std::min(since, until) / lid;  // 0 at the edge of the artefact, 1 at the gap
            x = since < lid ? g.x0 : g.x1;
            y = (since < lid ? g.y0 : g.y1) + depth * 1.5 * ppd_;
            pupil *= 1.0 - 0.8 * depth;
          } else {
            missing = true;
          }
          break;
        }
        case Segment::Kind::loss:
          missing = true;
          label = SampleLabel::loss;
          break;
      }
      out.time_us.push_back(t);
      labels.push_back(label);
      for (Eye e : {Eye::left, Eye::right}) {
        if ((e == Eye::left && !out.has_left) || (e == Eye::right && !out.has_right)) continue;
        EyeSamples& eye = out.eye(e);
        if (missing) {
          eye.x_px.push_back(kNaN);
          eye.y_px.push_back(kNaN);
          eye.pupil.push_back(kNaN);
          eye.valid.push_back(0);
          continue;
        }
        const double vergence = e == Eye::right ? 0.1 * ppd_ : 0.0;  // the eyes never agree exactly
        const double dy = drift.offset_px + drift.slope * (x - cfg_.screen.width_px / 2.0) + drift.session_px;
        eye.x_px.push_back(static_cast<float>(x + vergence + noise(rng_)));
        eye.y_px.push_back(static_cast<float>(y + dy + noise(rng_)));
        eye.pupil.push_back(static_cast<float>(pupil));
        eye.valid.push_back(1);
      }
    }
    return t;
  }

  double ppd() const { return ppd_; }

 private:
  const SimulationConfig& cfg_;
  const SignalParams& sig_;
  VisualAngle angle_;
  std::mt19937_64& rng_;
  double ppd_;
  double noise_sd_px_;
  Microseconds step_us_;
  double pupil_ = 1200.0;
};

Microseconds ms_to_us(double ms) { return static_cast<Microseconds>(std::llround(ms * 1000.0)); }

}  // namespace

double saccade_duration_ms(double amplitude_deg) { return 2.2 * amplitude_deg + 21.0; }

std::string participant_label(std::size_t i) {
  char buf[16];
  std::snprintf(buf, sizeof buf, "p%02zu", i + 1);
  return buf;
}

SimulationConfig detection_grid_config(double sample_rate_hz, double noise_rms_s2s_deg, bool post_saccadic_oscillation) {
  SimulationConfig c;
  c.design = demo_design();
  c.design.participants = 2;
  c.signal.sample_rate_hz = sample_rate_hz;
  c.signal.noise_rms_s2s_deg = noise_rms_s2s_deg;
  c.signal.post_saccadic_oscillation = post_saccadic_oscillation;
  c.seed = 77;
  return c;
}

SimulatedStudy simulate_study(const SimulationConfig& cfg) {
  SimulatedStudy study;
  study.config = cfg;
  const std::size_t K = cfg.design.conditions.size();
  for (const auto& item : cfg.design.items) {
    std::vector<LaidOutItem> per_condition;
    std::vector<int> targets;
    for (std::size_t c = 0; c < K; ++c) {
      const ResolvedItem r = resolve_item(item, c);
      per_condition.push_back(lay_out_item(item.id, r.marked_text, cfg.layout));
      targets.push_back(r.target_region);
    }
    study.items.push_back(std::move(per_condition));
    study.target_regions.push_back(std::move(targets));
  }

  for (int p = 0; p < cfg.design.participants; ++p) {
    // One generator per participant: participants are independent of each other's length.
    std::mt19937_64 rng(cfg.seed * 1000003u + static_cast<std::uint64_t>(p));
    std::uniform_real_distribution<double> uniform(0.0, 1.0);
    std::normal_distribution<double> normal(0.0, 1.0);
    TrialRenderer renderer(cfg, rng);
    const double ppd = renderer.ppd();

    SimulatedRecording sr;
    Recording& rec = sr.recording;
    rec.participant = participant_label(static_cast<std::size_t>(p));
    rec.session = "1";
    rec.id = rec.participant + "_" + rec.session;
    rec.sample_rate_hz = cfg.signal.sample_rate_hz;
    rec.screen = cfg.screen;
    rec.samples.has_left = true;
    rec.samples.has_right = cfg.signal.binocular;

    std::vector<std::size_t> order(cfg.design.items.size());
    std::iota(order.begin(), order.end(), 0);
    std::shuffle(order.begin(), order.end(), rng);

    Microseconds t = 1'000'000;  // recordings start one second into the tracker's clock
    t -= t % renderer.step_us();
    for (std::size_t k = 0; k < order.size(); ++k) {
      const std::size_t i = order[k];
      const std::size_t cond = condition_for(static_cast<std::size_t>(p), i, K);
      const LaidOutItem& item = study.items[i][cond];
      const int target = study.target_regions[i][cond];
      const std::string trial_id = std::to_string(k + 1);
      const auto path = generate_scanpath(item, target, cond == cfg.hard_condition, cfg.reader, rng);

      TrialDrift drift;
      drift.trial = trial_id;
      drift.offset_px = cfg.signal.drift_offset_sd_px * normal(rng);
      drift.slope = cfg.signal.drift_slope_sd * normal(rng);
      drift.session_px = cfg.signal.drift_growth_px_per_trial * static_cast<double>(k);
      sr.truth.drift.push_back(drift);

      // Build the trial's timeline of segments.
      std::vector<Segment> seg;
      const double marker_x = cfg.layout.left_margin_px - 3 * cfg.layout.char_width_px;
      const double marker_y = item.line_centre_y(0, cfg.layout);
      Microseconds now = t;
      const Microseconds display_on = t + ms_to_us(cfg.signal.start_marker_ms);
      seg.push_back({Segment::Kind::fixation, now, display_on, marker_x, marker_y, marker_x, marker_y});
      sr.truth.fixations.push_back({trial_id, now, display_on, marker_x, marker_y, -1, -1, -1});
      now = display_on;
      double px = marker_x, py = marker_y;
      for (const auto& f : path) {
        const PlacedChar& ch = item.chars[static_cast<std::size_t>(f.char_index)];
        const double x = ch.centre_x_px, y = ch.centre_y_px;
        const double amplitude = std::hypot(x - px, y - py) / ppd;
        if (uniform(rng) < cfg.signal.blink_probability_per_saccade) {
          // The pupil is lost for blink_min..max ms, with the lid artefacts before and after.
          std::uniform_real_distribution<double> blink_ms(cfg.signal.blink_min_ms, cfg.signal.blink_max_ms);
          const Microseconds end = now + ms_to_us(blink_ms(rng) + 2 * cfg.signal.lid_artefact_ms);
          seg.push_back({Segment::Kind::blink, now, end, px, py, x, y});
          now = end;
        } else {
          const Microseconds end = now + ms_to_us(saccade_duration_ms(amplitude));
          seg.push_back({Segment::Kind::saccade, now, end, px, py, x, y});
          now = end;
          if (cfg.signal.post_saccadic_oscillation && amplitude > 1.0) {
            const Microseconds pso_end = now + ms_to_us(cfg.signal.pso_duration_ms);
            seg.push_back({Segment::Kind::pso, now, pso_end, px, py, x, y});
            now = pso_end;
          }
        }
        const Microseconds fix_end = now + ms_to_us(f.duration_ms);
        sr.truth.fixations.push_back({trial_id, now, fix_end, x, y, ch.line, ch.region, f.char_index});
        if (uniform(rng) < cfg.signal.loss_probability_per_fixation && f.duration_ms > cfg.signal.loss_max_ms + 40) {
          // Track loss inside the fixation: the fixation's samples around it remain.
          std::uniform_real_distribution<double> loss_ms(cfg.signal.loss_min_ms, cfg.signal.loss_max_ms);
          const Microseconds a = now + ms_to_us(20), b = a + ms_to_us(loss_ms(rng));
          seg.push_back({Segment::Kind::fixation, now, a, x, y, x, y});
          seg.push_back({Segment::Kind::loss, a, b, x, y, x, y});
          seg.push_back({Segment::Kind::fixation, b, fix_end, x, y, x, y});
        } else {
          seg.push_back({Segment::Kind::fixation, now, fix_end, x, y, x, y});
        }
        now = fix_end;
        px = x;
        py = y;
      }

      rec.messages.push_back({t, "begin trial " + trial_id});
      rec.messages.push_back({t, "item " + cfg.design.items[i].id + " condition " + cfg.design.conditions[cond]});
      rec.messages.push_back({display_on, "text shown"});
      const Microseconds after = renderer.render(seg, drift, t, rec.samples, sr.truth.labels);
      const Microseconds last_sample = after - renderer.step_us();
      rec.messages.push_back({last_sample, "end trial " + trial_id});
      Trial trial;
      trial.id = trial_id;
      trial.start_us = t;
      trial.end_us = last_sample;
      trial.variables["item"] = cfg.design.items[i].id;
      trial.variables["condition"] = cfg.design.conditions[cond];
      trial.markers["text_shown"] = display_on;
      rec.trials.push_back(trial);
      t = after + ms_to_us(cfg.signal.inter_trial_gap_ms);
      t -= t % renderer.step_us();
    }
    study.recordings.push_back(std::move(sr));
  }
  return study;
}

}  // namespace gazemill::sim
