// Smooth pursuit apart from fixations: the dispersion stage of I-VDT
// (Komogortsev & Karpov 2013, Behavior Research Methods 45(1), 203-215;
// the stage is I-DT of Salvucci & Goldberg 2000 with a temporal window,
// dispersion (max x - min x) + (max y - min y); both from memory), run over
// the runs of fixation samples another detector found; and how pursuit
// reaches the protocol, the scorer's classes and the events (never a
// fixation).

#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "app/protocol_parser.h"
#include "app/stage_settings.h"
#include "detectors/detector_registry.h"
#include "detectors/event_detector.h"
#include "detectors/recording_detection.h"
#include "detectors/scoring.h"
#include "detectors/smooth_pursuit.h"
#include "pipeline/input_error.h"
#include "sim/study_simulator.h"

using namespace gazemill;

namespace {

GazeTrace trace_of(const std::vector<double>& x) {
  GazeTrace g;
  for (std::size_t i = 0; i < x.size(); ++i) {
    g.time_us.push_back(static_cast<Microseconds>(i) * 1000);
    g.x_deg.push_back(x[i]);
    g.y_deg.push_back(0.0);
    g.x_px.push_back(x[i]);
    g.y_px.push_back(0.0);
    g.pupil.push_back(1000.f);
    g.valid.push_back(1);
  }
  g.interval_us = 1000;
  return g;
}

std::string letters(const std::vector<SampleLabel>& labels) {
  std::string s;
  for (auto l : labels) s += l == SampleLabel::fixation ? 'F' : l == SampleLabel::pursuit ? 'P' : 'o';
  return s;
}

// 1000 Hz: 0-29 at x = 0, a ramp x = 0.125 (k - 29) deg over 30-59 (125
// deg/s; steps of 1/8 are exact in binary), then 3.75 deg to 99. Window
// 10 ms (10 samples), threshold 0.5 deg. By hand:
//  - from 0 the window grows while the ramp stays within 0.5: sample 33
//    (0.5) is in, 34 (0.625) is not: 0-33 fixation;
//  - a window starting at k on the ramp spans 3.75 - 0.125 (k - 29) once it
//    reaches the plateau, within 0.5 from k = 55 on; windows from 34-54
//    span more (from 34: 0.125 x 9 = 1.125 on the ramp alone): 34-54 are
//    pursuit, 21 samples; 55-99 fixation.
std::vector<double> ramp_trace() {
  std::vector<double> x(100, 0.0);
  for (int k = 30; k < 100; ++k) x[k] = k < 60 ? 0.125 * (k - 29) : 3.75;
  return x;
}

}  // namespace

TEST(SmoothPursuit, IvdtDispersionStageByHand) {
  const GazeTrace g = trace_of(ramp_trace());
  std::vector<SampleLabel> labels(100, SampleLabel::fixation);
  EXPECT_EQ(label_pursuit(g, {0.5, 10.0}, labels), 21u);
  EXPECT_EQ(letters(labels), std::string(34, 'F') + std::string(21, 'P') + std::string(45, 'F'));
}

// Off (0 deg, the default) changes nothing; other labels are never touched.
TEST(SmoothPursuit, OffByDefaultAndOnlyFixationSamples) {
  const GazeTrace g = trace_of(ramp_trace());
  std::vector<SampleLabel> labels(100, SampleLabel::fixation);
  EXPECT_EQ(label_pursuit(g, PursuitParams{}, labels), 0u);
  EXPECT_EQ(letters(labels), std::string(100, 'F'));
  for (int k = 34; k < 55; ++k) labels[k] = SampleLabel::saccade;
  EXPECT_EQ(label_pursuit(g, {0.5, 10.0}, labels), 0u) << "both runs stay within 0.5 deg (the first exactly)";
  EXPECT_EQ(DetectionSpec{}.pursuit_dispersion_deg, 0.0);
}

// Our change to I-VDT: a run shorter than the window is judged as one
// window: still, it stays a fixation; moving, it is pursuit throughout
// (its first window fails, and what is left is shorter than the window).
TEST(SmoothPursuit, RunShorterThanTheWindowIsOneWindow) {
  const GazeTrace g = trace_of({0, 0, 0.25, 0, 0, 0, 1, 2, 3, 4});
  std::vector<SampleLabel> labels(10, SampleLabel::other);
  for (int k = 0; k < 5; ++k) labels[k] = SampleLabel::fixation;   // dispersion 0.25
  for (int k = 6; k < 10; ++k) labels[k] = SampleLabel::fixation;  // dispersion 3
  label_pursuit(g, {0.5, 100.0}, labels);
  EXPECT_EQ(letters(labels), "FFFFFoPPPP");
}

// Pursuit samples go through the shared clean-up as pursuit and make no
// fixation event: the reading measures never see them.
TEST(SmoothPursuit, PursuitIsNoFixationEvent) {
  const GazeTrace g = trace_of(ramp_trace());
  std::vector<SampleLabel> labels(100, SampleLabel::fixation);
  EventParams p;
  p.pursuit = {0.5, 10.0};
  p.min_fixation_ms = 20;  // the first fixation lasts 34 ms
  tidy_labels(g, p, labels);
  EXPECT_EQ(letters(labels), std::string(34, 'F') + std::string(21, 'P') + std::string(45, 'F'));
  DetectedEvents ev;
  collect_events(g, labels, "t1", Eye::left, ev);
  ASSERT_EQ(ev.fixations.size(), 2u);
  EXPECT_EQ(ev.fixations[0].end_us, 34000);
  EXPECT_EQ(ev.fixations[1].start_us, 55000);
  EXPECT_TRUE(ev.saccades.empty());
}

TEST(SmoothPursuit, ProtocolSection) {
  const std::string base =
      "[input]\nfiles=['x']\n[input.table]\ntime_column='t'\n[input.table.left]\nx_column='x'\ny_column='y'\n"
      "[screen]\nwidth_px=10\nheight_px=10\nwidth_mm=10\nheight_mm=10\nviewing_distance_mm=10\n"
      "[trials]\nstart='a'\nend='b'\n";
  const Protocol p = parse_protocol_text(base + "[detection.pursuit]\ndispersion_deg = 1.35\nwindow_ms = 110\n", "p.toml");
  EXPECT_EQ(p.detection.pursuit_dispersion_deg, 1.35);
  EXPECT_EQ(p.detection.pursuit_window_ms, 110.0);
  EXPECT_EQ(event_params(p.detection).pursuit.dispersion_deg, 1.35);
  EXPECT_THROW(parse_protocol_text(base + "[detection.pursuit]\ndispersion_deg = -1\n", "p.toml"), InputError);
  EXPECT_THROW(parse_protocol_text(base + "[detection.pursuit]\nradius_deg = 1\n", "p.toml"), InputError);
}

// The scorer reports pursuit as a class of its own.
TEST(SmoothPursuit, ScoredAsAClass) {
  const std::vector<Microseconds> t = {0, 1000, 2000, 3000};
  AgreementScorer s;
  s.add({SampleLabel::fixation, SampleLabel::pursuit, SampleLabel::pursuit, SampleLabel::fixation},
        {SampleLabel::fixation, SampleLabel::pursuit, SampleLabel::fixation, SampleLabel::fixation}, t);
  const AgreementReport r = s.report();
  EXPECT_EQ(r.of(SampleLabel::pursuit).label, SampleLabel::pursuit);
  EXPECT_EQ(r.of(SampleLabel::pursuit).reference_samples, 2u);
  EXPECT_EQ(r.of(SampleLabel::pursuit).detected_samples, 1u);
  // Cohen (1960) by hand: po = 3/4, pe = 2/4 x 1/4 + 2/4 x 3/4 = 1/2, kappa 0.5.
  EXPECT_DOUBLE_EQ(r.of(SampleLabel::pursuit).kappa, 0.5);
}

// Reading has next to no pursuit: on the simulated reading study of
// DetectorAccuracy (1000 Hz, 0.03 deg, no pursuit in it) a pursuit stage at
// 1.35 deg over 100 ms (I-VDT's dispersion threshold as we recall it, from
// memory) and at 0.5 deg took none, as the default; at 0.15 deg, inside the
// noise's own dispersion over 100 ms, it takes fixation samples (printed).
TEST(SmoothPursuit, CostOnSimulatedReading) {
  sim::SimulationConfig c;
  c.design = sim::demo_design();
  c.design.participants = 3;
  c.signal.sample_rate_hz = 1000;
  c.signal.noise_rms_s2s_deg = 0.03;
  c.signal.post_saccadic_oscillation = false;
  c.seed = 21;
  const sim::SimulatedStudy st = sim::simulate_study(c);
  for (double dispersion : {0.0, 1.35, 0.5, 0.15}) {
    DetectionSpec spec;
    spec.pursuit_dispersion_deg = dispersion;
    const auto detector = make_detector(spec);
    AgreementScorer scorer;
    for (const auto& sr : st.recordings) {
      scorer.add(sr.truth.labels, detect_recording(sr.recording, *detector, spec).labels, sr.recording.samples.time_us);
    }
    const AgreementReport r = scorer.report();
    std::printf("pursuit at %.2f deg: fixation kappa %.3f, %llu of %llu samples labelled pursuit\n", dispersion,
                r.of(SampleLabel::fixation).kappa, static_cast<unsigned long long>(r.of(SampleLabel::pursuit).detected_samples),
                static_cast<unsigned long long>(r.samples));
    if (dispersion == 0) {
      EXPECT_EQ(r.of(SampleLabel::pursuit).detected_samples, 0u);
    }
  }
}

// The pursuit stage is part of the detect stage's key, and only when asked
// for: a study without it keeps the key it had before pursuit existed.
TEST(SmoothPursuit, JoinsTheDetectKeyOnlyWhenOn) {
  DetectionSpec off, on;
  on.pursuit_dispersion_deg = 1.35;
  EXPECT_EQ(detection_settings_json(off).find("pursuit"), std::string::npos);
  EXPECT_NE(detection_settings_json(on).find("\"pursuit\":{\"dispersion_deg\":1.35,\"window_ms\":100.0}"), std::string::npos)
      << detection_settings_json(on);
  DetectionSpec wider = on;
  wider.pursuit_window_ms = 110;
  EXPECT_NE(detection_settings_json(on), detection_settings_json(wider));
}
