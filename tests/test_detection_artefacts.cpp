// Detection on the artefacts of real recordings, one at a time: post-saccadic
// oscillations, noise bursts, blinks with lid artefacts, track loss coded as
// zeros, timestamp jitter, a sampling rate that changes part-way, and the
// choice of eye in binocular recordings. The reference is the simulator's
// ground truth; each test says what must hold.

#include <gtest/gtest.h>

#include <cmath>
#include <random>

#include "detectors/detector_registry.h"
#include "detectors/recording_detection.h"
#include "detectors/scoring.h"
#include "io/delimited_reader.h"
#include "sim/study_simulator.h"
#include "test_support.h"

using namespace gazemill;

namespace {

sim::SimulatedStudy make_study(bool pso, double rate = 1000, bool binocular = false, std::uint64_t seed = 33) {
  sim::SimulationConfig c;
  c.design = sim::demo_design();
  c.design.participants = 2;
  c.signal.sample_rate_hz = rate;
  c.signal.post_saccadic_oscillation = pso;
  c.signal.binocular = binocular;
  c.seed = seed;
  return sim::simulate_study(c);
}

DetectionSpec ivt() {
  DetectionSpec s;
  s.method = "ivt";
  s.parameters = {{"velocity_threshold_deg_s", 15}, {"sg_window_ms", 10}};
  s.blink_padding_before_ms = s.blink_padding_after_ms = 30;
  return s;
}

AgreementReport score(const Recording& rec, const std::vector<SampleLabel>& truth, const DetectionSpec& spec) {
  const auto d = make_detector(spec);
  AgreementScorer s;
  s.add(truth, detect_recording(rec, *d, spec).labels, rec.samples.time_us);
  return s.report();
}

const ClassAgreement& cls(const AgreementReport& r, SampleLabel l) { return r.classes[static_cast<std::size_t>(l)]; }

std::size_t true_saccades(const RecordingTruth& t) {
  std::size_t n = 0;
  for (std::size_t i = 0; i < t.labels.size(); ++i) {
    n += t.labels[i] == SampleLabel::saccade && (i == 0 || t.labels[i - 1] != SampleLabel::saccade);
  }
  return n;
}

}  // namespace

// Post-saccadic oscillations must not turn into extra saccades (velocity
// detectors), and the adaptive method labels them as glissades.
TEST(DetectionArtefacts, PostSaccadicOscillation) {
  const auto st = make_study(true);
  const auto& sr = st.recordings[0];
  const auto r = score(sr.recording, sr.truth.labels, ivt());
  const double n_true = static_cast<double>(true_saccades(sr.truth));
  EXPECT_NEAR(static_cast<double>(cls(r, SampleLabel::saccade).detected_events), n_true, 0.05 * n_true);
  EXPECT_GE(cls(r, SampleLabel::saccade).f1, 0.95);

  DetectionSpec nh;
  nh.method = "nystrom_holmqvist";
  nh.parameters = {{"sg_window_ms", 4}};
  nh.blink_padding_before_ms = nh.blink_padding_after_ms = 30;
  const auto rn = score(sr.recording, sr.truth.labels, nh);
  EXPECT_GE(cls(rn, SampleLabel::pso).f1, 0.9) << "glissade events found by the adaptive method";
  EXPECT_GE(cls(rn, SampleLabel::saccade).f1, 0.95);

  // A glissade window of 0 ms turns glissade labelling off entirely.
  nh.parameters["max_glissade_ms"] = 0;
  const auto off = score(sr.recording, sr.truth.labels, nh);
  EXPECT_EQ(cls(off, SampleLabel::pso).detected_samples, 0u);
}

// A noise burst (single samples thrown far off) neither creates saccades nor
// splits the fixation it falls in.
TEST(DetectionArtefacts, NoiseBurstsInsideFixations) {
  const auto st = make_study(false);
  Recording rec = st.recordings[0].recording;
  const auto& truth = st.recordings[0].truth.labels;
  const auto clean = score(rec, truth, ivt());
  std::mt19937 rng(5);
  int injected = 0;
  for (std::size_t i = 100; i + 100 < rec.samples.size() && injected < 60; i += 700) {
    if (truth[i - 5] != SampleLabel::fixation || truth[i + 5] != SampleLabel::fixation || !rec.samples.left.valid[i]) continue;
    rec.samples.left.x_px[i] += 150.0f;  // about 3.4 deg for one sample
    ++injected;
  }
  ASSERT_GE(injected, 40);
  const auto noisy = score(rec, truth, ivt());
  EXPECT_EQ(cls(noisy, SampleLabel::saccade).detected_events, cls(clean, SampleLabel::saccade).detected_events);
  EXPECT_EQ(cls(noisy, SampleLabel::fixation).detected_events, cls(clean, SampleLabel::fixation).detected_events);
}

// Blinks: the gap and its lid artefacts are one blink event; no saccade is
// reported touching a blink.
TEST(DetectionArtefacts, BlinksWithLidArtefacts) {
  const auto st = make_study(false, 500, false, 44);
  for (const auto& sr : st.recordings) {
    const auto d = make_detector(ivt());
    const auto det = detect_recording(sr.recording, *d, ivt());
    AgreementScorer s;
    s.add(sr.truth.labels, det.labels, sr.recording.samples.time_us);
    const auto r = s.report();
    EXPECT_EQ(cls(r, SampleLabel::blink).detected_events, cls(r, SampleLabel::blink).reference_events);
    EXPECT_GE(cls(r, SampleLabel::blink).kappa, 0.9);
    for (const auto& b : det.events.blinks) {
      for (const auto& sac : det.events.saccades) {
        EXPECT_FALSE(sac.end_us >= b.start_us - 2000 && sac.start_us <= b.end_us + 2000) << "saccade glued to a blink";
      }
    }
  }
}

// Track loss coded as (0, 0) and read with zero_gaze_is_missing gives the same
// labels as loss coded as missing values.
TEST(DetectionArtefacts, TrackLossCodedAsZeros) {
  test_support::TempDir dir;
  const auto st = make_study(false, 500);
  const Recording& rec = st.recordings[0].recording;
  std::string nan_text = "t\tx\ty\tp\n", zero_text = nan_text;
  for (std::size_t i = 0; i < rec.samples.size(); ++i) {
    const auto& e = rec.samples.left;
    const std::string t = std::to_string(rec.samples.time_us[i]);
    if (e.valid[i]) {
      const std::string row = t + "\t" + std::to_string(e.x_px[i]) + "\t" + std::to_string(e.y_px[i]) + "\t1000\n";
      nan_text += row;
      zero_text += row;
    } else {
      nan_text += t + "\t.\t.\t.\n";
      zero_text += t + "\t0\t0\t0\n";
    }
  }
  DelimitedReadOptions o;
  o.layout.time_column = "t";
  o.layout.time_unit = TimeUnit::microseconds;
  o.layout.left = EyeColumnNames{"x", "y", "p"};
  o.layout.missing_values = {"."};
  CollectingSink a, b;
  read_delimited(dir.write("nan.tsv", nan_text), o, a);
  o.layout.zero_gaze_is_missing = true;
  o.layout.missing_values = {".", "0"};  // the pupil column writes 0 when lost, too
  read_delimited(dir.write("zero.tsv", zero_text), o, b);
  Recording ra = rec, rb = rec;
  ra.samples = a.samples;
  rb.samples = b.samples;
  const auto d = make_detector(ivt());
  EXPECT_EQ(detect_recording(ra, *d, ivt()).labels, detect_recording(rb, *d, ivt()).labels);
}

// Timestamp jitter of up to a fifth of the interval changes the agreement very little.
TEST(DetectionArtefacts, TimestampJitter) {
  const auto st = make_study(false);
  Recording rec = st.recordings[0].recording;
  const auto& truth = st.recordings[0].truth.labels;
  const double clean = cls(score(rec, truth, ivt()), SampleLabel::saccade).kappa;
  std::mt19937 rng(9);
  std::uniform_int_distribution<int> jitter(-200, 200);  // us, at 1000 Hz
  for (auto& t : rec.samples.time_us) t += jitter(rng);
  const double jittered = cls(score(rec, truth, ivt()), SampleLabel::saccade).kappa;
  EXPECT_GE(jittered, clean - 0.02);
}

// The rate halves part-way through the recording: both parts are still detected well.
TEST(DetectionArtefacts, RateChangesPartWay) {
  const auto st = make_study(false);
  const Recording& full = st.recordings[0].recording;
  const auto& truth = st.recordings[0].truth.labels;
  // Keep every sample in the first half, every second one after it.
  const std::size_t half = full.samples.size() / 2;
  Recording rec = full;
  rec.samples.clear();
  std::vector<SampleLabel> ref;
  for (std::size_t i = 0; i < full.samples.size(); ++i) {
    if (i >= half && (i - half) % 2) continue;
    rec.samples.time_us.push_back(full.samples.time_us[i]);
    rec.samples.left.x_px.push_back(full.samples.left.x_px[i]);
    rec.samples.left.y_px.push_back(full.samples.left.y_px[i]);
    rec.samples.left.pupil.push_back(full.samples.left.pupil[i]);
    rec.samples.left.valid.push_back(full.samples.left.valid[i]);
    ref.push_back(truth[i]);
  }
  const auto d = make_detector(ivt());
  const auto labels = detect_recording(rec, *d, ivt()).labels;
  const std::size_t cut = half;
  for (auto [a, b] : {std::pair<std::size_t, std::size_t>{0, cut}, {cut, rec.samples.size()}}) {
    AgreementScorer s;
    s.add({ref.begin() + a, ref.begin() + b}, {labels.begin() + a, labels.begin() + b}, {rec.samples.time_us.begin() + a, rec.samples.time_us.begin() + b});
    EXPECT_GE(cls(s.report(), SampleLabel::saccade).kappa, 0.85) << "part starting at sample " << a;
    EXPECT_GE(cls(s.report(), SampleLabel::fixation).kappa, 0.85) << "part starting at sample " << a;
  }
}

// Binocular: "best" takes, trial by trial, the eye with more valid samples.
TEST(DetectionArtefacts, BestEyePerTrial) {
  const auto st = make_study(false, 500, true);
  Recording rec = st.recordings[0].recording;
  ASSERT_TRUE(rec.samples.has_right);
  // Spoil the left eye in trial 1 and the right eye in trial 2.
  auto spoil = [&](Eye e, const Trial& t) {
    for (std::size_t i = 0; i < rec.samples.size(); ++i) {
      if (rec.samples.time_us[i] < t.start_us || rec.samples.time_us[i] > t.end_us || i % 3) continue;
      rec.samples.eye(e).valid[i] = 0;
      rec.samples.eye(e).x_px[i] = rec.samples.eye(e).y_px[i] = NAN;
    }
  };
  spoil(Eye::left, rec.trials[0]);
  spoil(Eye::right, rec.trials[1]);
  DetectionSpec spec = ivt();
  spec.eye = EyeChoice::best;
  const auto d = make_detector(spec);
  const auto det = detect_recording(rec, *d, spec);
  EXPECT_EQ(det.trial_eye[0], Eye::right);
  EXPECT_EQ(det.trial_eye[1], Eye::left);
  spec.eye = EyeChoice::left;
  EXPECT_EQ(detect_recording(rec, *d, spec).trial_eye[1], Eye::left);
  spec.eye = EyeChoice::average;
  const auto avg = detect_recording(rec, *d, spec);
  EXPECT_GT(avg.events.fixations.size(), 100u);
}
