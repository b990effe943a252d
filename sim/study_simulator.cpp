#include "sim/study_simulator.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>
#include <random>
#include <stdexcept>

#include <fmt/format.h>

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
  double x0, y0, x1, y1;  // position at start and end (px): true x, y as the tracker would report it before the trial's drift
};

class TrialRenderer {
 public:
  TrialRenderer(const SimulationConfig& cfg, std::mt19937_64& rng, double pupil_mean_mm)
      : cfg_(cfg), sig_(cfg.signal), angle_(cfg.screen), rng_(rng),
        ppd_(angle_.pixels_per_degree_at_centre()),
        // White noise with per-axis SD s gives RMS sample-to-sample distance 2 s (two axes, independent samples).
        noise_sd_px_(sig_.noise_rms_s2s_deg / 2.0 * ppd_),
        step_us_(static_cast<Microseconds>(std::llround(1e6 / sig_.sample_rate_hz))),
        pupil_mean_(pupil_mean_mm), pupil_(pupil_mean_mm) {
    const double dt = static_cast<double>(step_us_) / 1e6;
    pupil_keep_ = std::exp(-dt / sig_.pupil_wander_time_constant_s);
    pupil_step_sd_ = sig_.pupil_wander_sd_mm * std::sqrt(1.0 - pupil_keep_ * pupil_keep_);
  }

  Microseconds step_us() const { return step_us_; }

  // Appends the trial's samples from `t0` and returns the time after its last sample.
  Microseconds render(const std::vector<Segment>& segments, const TrialDrift& drift, Microseconds t0,
                      SampleColumns& out, std::vector<SampleLabel>& labels) {
    std::normal_distribution<double> noise(0.0, noise_sd_px_);
    std::normal_distribution<double> standard(0.0, 1.0);
    const Microseconds end = segments.back().end_us;
    std::size_t s = 0;
    Microseconds t = t0;
    for (; t < end; t += step_us_) {
      while (s + 1 < segments.size() && t >= segments[s].end_us) ++s;
      const Segment& g = segments[s];
      const double tau = g.end_us > g.start_us ? std::clamp(double(t - g.start_us) / double(g.end_us - g.start_us), 0.0, 1.0) : 1.0;
      double x = g.x0, y = g.y0;
      // Ornstein-Uhlenbeck wander around the participant's mean diameter.
      pupil_ = std::clamp(pupil_mean_ + (pupil_ - pupil_mean_) * pupil_keep_ + pupil_step_sd_ * standard(rng_), 2.0, 8.0);
      double pupil = pupil_;
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
        eye.pupil.push_back(static_cast<float>(e == Eye::right ? pupil * 1.02 : pupil));
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
  double pupil_mean_;
  double pupil_;
  double pupil_keep_ = 1;
  double pupil_step_sd_ = 0;
};

Microseconds ms_to_us(double ms) { return static_cast<Microseconds>(std::llround(ms * 1000.0)); }

// A fixation the reader makes: where the eye truly was, where the tracker
// puts it before the trial's drift (passages add their shift and noise), and
// what it lay on.
struct PlannedFixation {
  double x = 0, y = 0;   // true position (px)
  double extra_y = 0;    // passage shift and noise (px)
  double duration_ms = 0;
  int line = -1, region = -1, char_index = -1;
};

std::vector<PlannedFixation> sentence_fixations(const LaidOutItem& item, int target, const TargetEffect& effect, const ReaderParams& reader,
                                                std::mt19937_64& rng) {
  std::vector<PlannedFixation> out;
  for (const auto& f : generate_scanpath(item, target, effect, reader, rng)) {
    const PlacedChar& ch = item.chars[static_cast<std::size_t>(f.char_index)];
    out.push_back({ch.centre_x_px, ch.centre_y_px, 0.0, f.duration_ms, ch.line, ch.region, f.char_index});
  }
  return out;
}

std::vector<PlannedFixation> passage_fixations(const LaidOutItem& item, const TextLayoutSpec& layout, const PassageReaderParams& reader,
                                               const ScanpathDistortion& distortion, std::mt19937_64& rng) {
  const Passage passage = passage_from_layout(item, layout);
  std::vector<int> first_word_of_line(passage.words.size(), 0);
  for (std::size_t l = 1; l < passage.words.size(); ++l) {
    first_word_of_line[l] = first_word_of_line[l - 1] + static_cast<int>(passage.words[l - 1].size());
  }
  std::vector<PlannedFixation> out;
  for (const auto& f : generate_passage_scanpath(passage, reader, distortion, rng)) {
    const Word& w = item.words[static_cast<std::size_t>(first_word_of_line[static_cast<std::size_t>(f.true_line)] + f.true_word)];
    // The letter under the landing point, within the word.
    int c = w.first_char;
    while (c < w.last_char) {
      const PlacedChar& ch = item.chars[static_cast<std::size_t>(c)];
      if (f.x_px < ch.left_px + ch.width_px) break;
      ++c;
    }
    out.push_back({f.x_px, f.true_y_px, f.y_px - f.true_y_px, f.duration_ms, f.true_line, w.region, c});
  }
  return out;
}

double uniform_between(std::mt19937_64& rng, double lo, double hi) { return lo + (hi - lo) * std::uniform_real_distribution<double>(0.0, 1.0)(rng); }

std::string join_levels(const StudyDesign& design, std::size_t cell) {
  std::string out;
  const auto names = design.level_names(cell);
  for (std::size_t f = 0; f < design.factors.size(); ++f) out += " " + design.factors[f].name + " " + names[f];
  return out;
}

}  // namespace

double saccade_duration_ms(double amplitude_deg) { return 2.2 * amplitude_deg + 21.0; }

std::string participant_label(std::size_t i) {
  char buf[24];
  std::snprintf(buf, sizeof buf, "p%02zu", i + 1);
  return buf;
}

SimulationConfig detection_grid_config(double sample_rate_hz, double noise_rms_s2s_deg, bool post_saccadic_oscillation) {
  SimulationConfig c;
  c.design = demo_design(12, 0);
  c.design.participants = 2;
  c.signal.sample_rate_hz = sample_rate_hz;
  c.signal.noise_rms_s2s_deg = noise_rms_s2s_deg;
  c.signal.post_saccadic_oscillation = post_saccadic_oscillation;
  c.seed = 77;
  return c;
}

StudySimulator::StudySimulator(SimulationConfig config) : config_(std::move(config)) {
  const StudyDesign& d = config_.design;
  d.validate();
  const double rate = config_.signal.sample_rate_hz;
  if (!(rate >= 100 && rate <= 2000)) throw std::invalid_argument(fmt::format("sample rate {:g} Hz: expected 100 to 2000 Hz", rate));
  const int tf = d.text_factor();
  const std::size_t variants = tf < 0 ? 1 : d.factors[static_cast<std::size_t>(tf)].levels.size();
  auto fits = [&](const LaidOutItem& li, const std::string& id) {
    const double bottom = config_.layout.first_line_top_px + li.line_count * config_.layout.line_height_px;
    if (bottom > config_.screen.height_px) {
      throw std::invalid_argument(fmt::format("item {}: its {} lines end at {:g} px, below the screen's {} px (fewer or shorter lines, "
                                              "or a longer line width, would fit)",
                                              id, li.line_count, bottom, config_.screen.height_px));
    }
  };
  for (const auto& item : d.items) {
    Stimulus s;
    s.id = item.id;
    for (std::size_t v = 0; v < variants; ++v) {
      const ResolvedItem r = resolve_item(item, v);
      s.marked_text.push_back(r.marked_text);
      s.layout.push_back(lay_out_item(item.id, r.marked_text, config_.layout));
      s.target_region.push_back(r.target_region);
      fits(s.layout.back(), item.id);
    }
    materials_.sentences.push_back(std::move(s));
  }
  for (const auto& p : d.passages) {
    Stimulus s;
    s.id = p.id;
    s.passage = true;
    s.marked_text.push_back(passage_marked_text(p));
    s.layout.push_back(lay_out_item(p.id, s.marked_text.back(), config_.layout));
    s.target_region.push_back(-1);
    fits(s.layout.back(), p.id);
    materials_.passages.push_back(std::move(s));
  }
}

SimulatedRecording StudySimulator::participant(std::size_t p) const {
  const SimulationConfig& cfg = config_;
  const StudyDesign& design = cfg.design;
  const SignalParams& sig = cfg.signal;
  // One generator per participant: participants are independent of each other's length.
  std::mt19937_64 rng(cfg.seed * 1000003u + static_cast<std::uint64_t>(p));
  std::uniform_real_distribution<double> uniform(0.0, 1.0);
  std::normal_distribution<double> normal(0.0, 1.0);

  SimulatedRecording sr;
  sr.list = list_of(p, design.lists());
  sr.answer_accuracy = std::clamp(design.accuracy_mean + design.accuracy_sd * normal(rng), design.accuracy_min, design.accuracy_max);
  sr.pupil_mean_mm = std::clamp(sig.pupil_mean_mm + sig.pupil_participant_sd_mm * normal(rng), sig.pupil_participant_min_mm,
                                sig.pupil_participant_max_mm);
  TrialRenderer renderer(cfg, rng, sr.pupil_mean_mm);
  const double ppd = renderer.ppd();
  const int tf = design.text_factor();

  Recording& rec = sr.recording;
  rec.participant = participant_label(p);
  rec.session = "1";
  rec.id = rec.participant + "_" + rec.session;
  rec.sample_rate_hz = sig.sample_rate_hz;
  rec.screen = cfg.screen;
  rec.samples.has_left = true;
  rec.samples.has_right = sig.binocular;

  // The sentence block, then the passage block, each in its own random order.
  struct Planned {
    bool passage;
    std::size_t index;
  };
  std::vector<std::size_t> sentences(materials_.sentences.size()), passages(materials_.passages.size());
  std::iota(sentences.begin(), sentences.end(), 0);
  std::iota(passages.begin(), passages.end(), 0);
  std::shuffle(sentences.begin(), sentences.end(), rng);
  std::shuffle(passages.begin(), passages.end(), rng);
  std::vector<Planned> order;
  for (auto i : sentences) order.push_back({false, i});
  for (auto i : passages) order.push_back({true, i});
  // A question after a random share of the trials.
  std::vector<bool> question(order.size(), false);
  {
    std::vector<std::size_t> pick(order.size());
    std::iota(pick.begin(), pick.end(), 0);
    std::shuffle(pick.begin(), pick.end(), rng);
    const auto n = static_cast<std::size_t>(std::llround(design.question_share * static_cast<double>(order.size())));
    for (std::size_t k = 0; k < n && k < pick.size(); ++k) question[pick[k]] = true;
  }

  const std::string list_text = std::to_string(sr.list + 1);
  Microseconds t = 1'000'000;  // recordings start one second into the tracker's clock
  t -= t % renderer.step_us();
  for (std::size_t k = 0; k < order.size(); ++k) {
    const std::string trial_id = std::to_string(k + 1);
    TrialTruth tt;
    tt.trial = trial_id;
    tt.passage = order[k].passage;
    tt.stimulus = order[k].index;
    tt.list = sr.list;
    const Stimulus& stim = stimulus(tt);
    TrialDrift drift;
    drift.trial = trial_id;
    drift.session_px = sig.drift_growth_px_per_trial * static_cast<double>(k);
    std::vector<PlannedFixation> path;
    int target = -1;
    std::string show;
    if (!tt.passage) {
      const std::size_t cell = cell_for(sr.list, tt.stimulus, design.cells());
      tt.cell = cell;
      tt.variant = tf < 0 ? 0 : design.levels_of(cell)[static_cast<std::size_t>(tf)];
      target = stim.target_region[tt.variant];
      path = sentence_fixations(stim.layout[tt.variant], target, design.effect_of(cell), cfg.reader, rng);
      drift.offset_px = sig.drift_offset_sd_px * normal(rng);
      drift.slope = sig.drift_slope_sd * normal(rng);
      show = "show sentence " + stim.id + join_levels(design, cell) + " list " + list_text;
    } else {
      const PassageDistortionRanges& range = cfg.passage_distortion;
      const double lh = cfg.layout.line_height_px;
      ScanpathDistortion d;
      d.noise_sd_px = uniform_between(rng, 0.0, range.noise_sd_lines * lh);
      d.shift = uniform_between(rng, -range.shift, range.shift);
      d.within_line_regression_probability = uniform_between(rng, 0.0, range.within_line_regression);
      d.between_line_regression_probability = uniform_between(rng, 0.0, range.between_line_regression);
      // Offset and slope act on every sample through the trial's drift, as in sentence trials.
      drift.offset_px = uniform_between(rng, -range.offset_lines * lh, range.offset_lines * lh);
      drift.slope = uniform_between(rng, -range.slope, range.slope);
      tt.shift = d.shift;
      tt.noise_sd_px = d.noise_sd_px;
      tt.within_line_regression = d.within_line_regression_probability;
      tt.between_line_regression = d.between_line_regression_probability;
      path = passage_fixations(stim.layout[0], cfg.layout, cfg.passage_reader, d, rng);
      show = "show passage " + stim.id + " list " + list_text;
    }
    const LaidOutItem& item = stim.layout[tt.variant];
    auto drift_at = [&](double x, double extra) {
      return extra + drift.offset_px + drift.slope * (x - cfg.screen.width_px / 2.0) + drift.session_px;
    };
    sr.truth.drift.push_back(drift);

    // The trial's timeline of segments.
    std::vector<Segment> seg;
    std::vector<Message> during;  // messages while the text is shown
    const double marker_x = cfg.layout.left_margin_px - 3 * cfg.layout.char_width_px;
    const double marker_y = item.line_centre_y(0, cfg.layout);
    Microseconds now = t;
    const Microseconds display_on = t + ms_to_us(sig.start_marker_ms);
    seg.push_back({Segment::Kind::fixation, now, display_on, marker_x, marker_y, marker_x, marker_y});
    sr.truth.fixations.push_back({trial_id, now, display_on, marker_x, marker_y, -1, -1, -1});
    sr.fixation_drift_y_px.push_back(drift_at(marker_x, 0.0));
    now = display_on;
    double px = marker_x, py = marker_y, pshown = marker_y;
    bool crossed = false;
    for (const auto& f : path) {
      const double x = f.x, y = f.y, shown = f.y + f.extra_y;
      const double amplitude = std::hypot(x - px, y - py) / ppd;
      Microseconds move_start = now;
      if (uniform(rng) < sig.blink_probability_per_saccade) {
        // The pupil is lost for blink_min..max ms, with the lid artefacts before and after.
        std::uniform_real_distribution<double> blink_ms(sig.blink_min_ms, sig.blink_max_ms);
        const Microseconds end = now + ms_to_us(blink_ms(rng) + 2 * sig.lid_artefact_ms);
        seg.push_back({Segment::Kind::blink, now, end, px, pshown, x, shown});
        now = end;
      } else {
        const Microseconds end = now + ms_to_us(saccade_duration_ms(amplitude));
        seg.push_back({Segment::Kind::saccade, now, end, px, pshown, x, shown});
        now = end;
      }
      // The boundary paradigm's display change: when the eyes first cross the
      // invisible boundary before the target, about half-way through the move.
      if (target >= 0 && !crossed && f.region >= target) {
        crossed = true;
        during.push_back({move_start + (now - move_start) / 2, "boundary crossed"});
      }
      if (seg.back().kind == Segment::Kind::saccade && sig.post_saccadic_oscillation && amplitude > 1.0) {
        const Microseconds pso_end = now + ms_to_us(sig.pso_duration_ms);
        seg.push_back({Segment::Kind::pso, now, pso_end, px, pshown, x, shown});
        now = pso_end;
      }
      const Microseconds fix_end = now + ms_to_us(f.duration_ms);
      sr.truth.fixations.push_back({trial_id, now, fix_end, x, y, f.line, f.region, f.char_index});
      sr.fixation_drift_y_px.push_back(drift_at(x, f.extra_y));
      if (uniform(rng) < sig.loss_probability_per_fixation && f.duration_ms > sig.loss_max_ms + 40) {
        // Track loss inside the fixation: the fixation's samples around it remain.
        std::uniform_real_distribution<double> loss_ms(sig.loss_min_ms, sig.loss_max_ms);
        const Microseconds a = now + ms_to_us(20), b = a + ms_to_us(loss_ms(rng));
        seg.push_back({Segment::Kind::fixation, now, a, x, shown, x, shown});
        seg.push_back({Segment::Kind::loss, a, b, x, shown, x, shown});
        seg.push_back({Segment::Kind::fixation, b, fix_end, x, shown, x, shown});
      } else {
        seg.push_back({Segment::Kind::fixation, now, fix_end, x, shown, x, shown});
      }
      now = fix_end;
      px = x;
      py = y;
      pshown = shown;
    }

    rec.messages.push_back({t, "begin trial " + trial_id});
    rec.messages.push_back({t, show});
    rec.messages.push_back({display_on, "text shown"});
    const Microseconds after = renderer.render(seg, drift, t, rec.samples, sr.truth.labels);
    const Microseconds last_sample = after - renderer.step_us();
    for (auto& m : during) rec.messages.push_back(m);
    rec.messages.push_back({last_sample, "text hidden"});
    Microseconds trial_end = last_sample;
    if (question[k]) {
      // The question is answered after the text; its screen is not recorded.
      const Microseconds shown_at = last_sample + ms_to_us(sig.question_delay_ms);
      const Microseconds answered = shown_at + ms_to_us(uniform_between(rng, sig.answer_min_ms, sig.answer_max_ms));
      tt.answer_correct = uniform(rng) < sr.answer_accuracy ? 1 : 0;
      rec.messages.push_back({shown_at, "question shown"});
      rec.messages.push_back({answered, "answer " + std::to_string(*tt.answer_correct)});
      trial_end = answered;
    }
    rec.messages.push_back({trial_end, "end trial " + trial_id});

    Trial trial;
    trial.id = trial_id;
    trial.start_us = t;
    trial.end_us = trial_end;
    trial.variables["item"] = stim.id;
    trial.variables["block"] = tt.passage ? "passage" : "sentence";
    trial.variables["list"] = list_text;
    if (tt.cell) {
      const auto names = design.level_names(*tt.cell);
      for (std::size_t f = 0; f < design.factors.size(); ++f) trial.variables[design.factors[f].name] = names[f];
    }
    if (tt.answer_correct) trial.variables["answer_correct"] = std::to_string(*tt.answer_correct);
    trial.markers["text_shown"] = display_on;
    trial.markers["text_hidden"] = last_sample;
    if (!during.empty()) trial.markers["boundary"] = during.front().time_us;
    rec.trials.push_back(trial);
    sr.trials.push_back(tt);
    t = std::max(after, trial_end + renderer.step_us()) + ms_to_us(sig.inter_trial_gap_ms);
    t -= t % renderer.step_us();
  }
  return sr;
}

SimulatedStudy simulate_study(const SimulationConfig& config) {
  const StudySimulator simulator(config);
  SimulatedStudy study;
  study.config = simulator.config();
  study.materials = simulator.materials();
  for (std::size_t p = 0; p < simulator.participants(); ++p) study.recordings.push_back(simulator.participant(p));
  return study;
}

}  // namespace gazemill::sim
