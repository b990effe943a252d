// The detectors' published rules on constructed traces, every expected value
// worked by hand in the test (the derivation beside it), and the boundaries
// the code decides: a sample exactly at I-VT's threshold, and the limits of
// what counts as a blink and of what is joined to one.

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <string>
#include <vector>

#include "detectors/detector_registry.h"
#include "detectors/engbert_kliegl_detector.h"
#include "detectors/event_detector.h"
#include "detectors/nystrom_holmqvist_detector.h"
#include "detectors/saccade_refinement.h"
#include "detectors/velocity_threshold_detector.h"

using namespace gazemill;

namespace {

// A trace in degrees straight from positions (no screen), one sample every
// `interval_us`, with a pupil signal unless told otherwise.
GazeTrace trace_of(const std::vector<double>& x, const std::vector<double>& y, Microseconds interval_us, bool pupil = true) {
  GazeTrace g;
  for (std::size_t i = 0; i < x.size(); ++i) {
    g.time_us.push_back(static_cast<Microseconds>(i) * interval_us);
    g.x_deg.push_back(x[i]);
    g.y_deg.push_back(y[i]);
    g.x_px.push_back(x[i]);
    g.y_px.push_back(y[i]);
    g.pupil.push_back(pupil ? 1000.f : std::numeric_limits<float>::quiet_NaN());
    g.valid.push_back(1);
  }
  g.interval_us = static_cast<double>(interval_us);
  return g;
}

void lose(GazeTrace& g, std::size_t from, std::size_t to) {  // samples [from, to) lost, pupil too
  for (std::size_t i = from; i < to; ++i) {
    g.valid[i] = 0;
    g.x_deg[i] = g.y_deg[i] = g.x_px[i] = g.y_px[i] = std::nan("");
    g.pupil[i] = std::numeric_limits<float>::quiet_NaN();
  }
}

std::string letters(const std::vector<SampleLabel>& labels, std::size_t from, std::size_t to) {
  std::string s;
  for (std::size_t i = from; i < to; ++i) s += "FSPBLo"[static_cast<int>(labels[i])];
  return s;
}

}  // namespace

// Engbert & Kliegl (2003), Vision Research 43, 1035-1045, section 2 (from
// memory; methods.md section 2): per axis eta = lambda x sigma, sigma =
// sqrt(median(v^2) - median(v)^2), and a sample is supra-threshold when
// (vx / eta_x)^2 + (vy / eta_y)^2 > 1: an ellipse, not each axis on its own
// and not one speed threshold.
//
// The trace, at 250 Hz (dt = 4 ms), moves in a triangle wave: 20 segments
// of 20 samples, rising by (2, 6) units of 1/128 deg per sample, then falling
// by as much. The five-sample moving difference v_n = (x[n+2] + x[n+1] -
// x[n-1] - x[n-2]) / (6 dt) is exact for a ramp, so inside a segment
// |vx| = u_x = (2/128) / 0.004 = 3.90625 deg/s and |vy| = u_y = 11.71875
// deg/s; at each turn three samples take 4/6 u, 0 and -4/6 u. Every feature
// below has its mirror image in the next (falling) segment, so v is
// symmetric about 0: median(v) = 0; and more than half the samples sit
// inside segments, so median(v^2) = u^2. Hence sigma_x = u_x, sigma_y = u_y,
// and with lambda = 6: eta_x = 23.4375, eta_y = 70.3125 deg/s.
//
// Probe A (segment 4, increments 85-93 of (9, 27) units, 4.5 x the segment's):
// its six inner samples 86-91 (all four increments of their window in the
// probe) move at (17.578125, 52.734375) deg/s = 0.75 x (eta_x, eta_y). Each
// axis alone is below its threshold, but 0.75^2 + 0.75^2 = 1.125 > 1: outside
// the ellipse, a saccade. Its edge samples 85 and 92 move at 47/12 of the
// segment's velocity on both axes: (47/72)^2 x 2 = 0.852, inside.
// Probe B (segment 10, increments 205-213 of (0, 24) units): inner samples
// move at (0, 46.875) deg/s. Their speed and their vertical component
// exceed eta_x, so one speed threshold, or a threshold shared by the axes,
// would take them; but (46.875 / 70.3125)^2 = 0.444 < 1: inside the
// ellipse, no saccade (its edges: at most (1/6)^2 + (4/6)^2 = 0.47).
TEST(EngbertKlieglRule, EllipseNotAxesNorSpeed) {
  std::vector<std::pair<int, int>> step(400);
  for (std::size_t i = 0; i < step.size(); ++i) {
    const int sign = (i / 20) % 2 == 0 ? 1 : -1;
    step[i] = {2 * sign, 6 * sign};
  }
  for (std::size_t i = 85; i <= 93; ++i) step[i] = {9, 27}, step[i + 20] = {-9, -27};     // probe A and its mirror
  for (std::size_t i = 205; i <= 213; ++i) step[i] = {0, 24}, step[i + 20] = {0, -24};    // probe B and its mirror
  std::vector<double> x(400), y(400);
  for (std::size_t i = 1; i < 400; ++i) {
    x[i] = x[i - 1] + step[i].first / 128.0;
    y[i] = y[i - 1] + step[i].second / 128.0;
  }
  const GazeTrace g = trace_of(x, y, 4000);
  EngbertKlieglParams p;  // lambda 6, at least 3 samples, 8 ms = the published five samples at 250 Hz
  std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
  const ParameterList fitted = EngbertKlieglDetector(p).label(g, labels);
  EXPECT_NEAR(fitted.at("threshold_x_deg_s"), 23.4375, 1e-9);
  EXPECT_NEAR(fitted.at("threshold_y_deg_s"), 70.3125, 1e-9);
  EXPECT_EQ(letters(labels, 84, 94), "FFSSSSSSFF");   // probe A: outside the ellipse, below both axes
  EXPECT_EQ(letters(labels, 104, 114), "FFSSSSSSFF");  // its mirror
  EXPECT_EQ(letters(labels, 200, 240), std::string(40, 'F'));  // probe B and its mirror: inside the ellipse
  std::size_t saccade_samples = 0;
  for (auto l : labels) saccade_samples += l == SampleLabel::saccade;
  EXPECT_EQ(saccade_samples, 12u);
}

// Nystrom & Holmqvist (2010), Behavior Research Methods 42(1), 188-204, the
// peak-threshold iteration (from memory; methods.md section 3): PT = mean +
// 6 SD of the velocities below PT, repeated until PT changes by less than
// 1 deg/s; the onset threshold is mean + 3 SD of the last iteration.
// Worked by hand: 50 samples at 10 and 50 at 20 deg/s (mean 15, SD 5) and
// ten at 200. From 60: PT = 15 + 30 = 45; below 45 the same samples, so PT
// stays 45 and the second iteration ends it. Ten more samples at 50 lie
// below the start: mean = 2000 / 110 = 200 / 11, mean square = 50000 / 110,
// variance = 5000/11 - 40000/121 = 15000/121, so PT = (200 + 6 sqrt(15000))
// / 11 = 84.986 deg/s, which takes in the same samples again.
TEST(NystromHolmqvistRule, PeakThresholdByHand) {
  std::vector<double> speed;
  for (int i = 0; i < 50; ++i) speed.push_back(10), speed.push_back(20);
  for (int i = 0; i < 10; ++i) speed.push_back(200);
  NystromHolmqvistParams p;  // starts at 60 deg/s, peak 6 SD, converged within 1 deg/s
  const PeakThreshold t = find_peak_threshold(speed, std::vector<bool>(speed.size(), true), p);
  EXPECT_NEAR(t.peak_deg_s, 45.0, 1e-12);
  EXPECT_NEAR(t.mean_deg_s, 15.0, 1e-12);
  EXPECT_NEAR(t.sd_deg_s, 5.0, 1e-12);
  EXPECT_EQ(t.iterations, 2);
  for (int i = 0; i < 10; ++i) speed.push_back(50);
  const PeakThreshold u = find_peak_threshold(speed, std::vector<bool>(speed.size(), true), p);
  EXPECT_NEAR(u.peak_deg_s, (200.0 + 6.0 * std::sqrt(15000.0)) / 11.0, 1e-9);
  EXPECT_NEAR(u.mean_deg_s + 3.0 * u.sd_deg_s, (200.0 + 3.0 * std::sqrt(15000.0)) / 11.0, 1e-9);  // the onset threshold
}

// Onset, offset and glissade (Nystrom & Holmqvist 2010, from memory;
// methods.md section 3) on a constructed speed trace at 1000 Hz, with onset
// threshold 30 deg/s and peak threshold 45 (the core: samples 12-14, faster
// than 45).
//  - Onset: back from the core to the first sample below 30 (sample 10, at
//    18): the saccade starts at 11. (The paper walks on to the local minimum
//    below the threshold, sample 9 here; our rule stops at the crossing,
//    see detectors/saccade_refinement.cpp.)
//  - Offset threshold: 0.7 x onset + 0.3 x (mean + 3 SD of the 4 samples
//    before the onset, 12/18/12/18: 15 + 3 x 3 = 24) = 21 + 7.2 = 28.2.
//    Forward from the core to the first local minimum below 28.2: sample 17
//    (27, then 35); sample 16 (29) is above it. The minimum is at rest, so
//    the saccade is 11-16.
//  - Glissade: within 40 ms after the minimum, samples faster than 28.2
//    (18-20: 35, 50, 33); then on to the next local minimum below 28.2
//    (21: 26, then 27). Samples 17-20 are the glissade; sample 19, faster
//    than the peak threshold, is part of it, not a saccade of its own.
//  - A glissade whose bump runs into lost data before coming back to rest
//    is none (our rule: velocity at the edge of lost data is noisy). Its
//    fastest sample then starts a saccade of its own, 18-21, 4 ms: shorter
//    than the 5 ms minimum set here, so it is not labelled.
TEST(NystromHolmqvistRule, OnsetOffsetAndGlissadeByHand) {
  std::vector<double> s;
  for (int i = 0; i <= 10; ++i) s.push_back(i % 2 ? 12 : 18);  // 0-10
  for (double v : {40, 80, 150, 90, 45, 29, 27, 35, 50, 33, 26, 27}) s.push_back(v);  // 11-22
  for (int i = 23; i < 70; ++i) s.push_back(i % 2 ? 12 : 18);
  const GazeTrace g = trace_of(std::vector<double>(s.size(), 0.0), std::vector<double>(s.size(), 0.0), 1000);
  SaccadeRefinementParams p;
  p.onset_threshold_deg_s = 30;
  p.offset_onset_weight = 0.7;
  p.local_noise_window_ms = 4;
  p.max_glissade_ms = 40;
  p.min_saccade_ms = 5;
  std::vector<bool> usable(s.size(), true);
  const std::vector<SaccadeCore> cores = cores_above(s, usable, 45.0);
  ASSERT_EQ(cores.size(), 2u);  // 12-14 and 19
  EXPECT_EQ(cores[0].first, 12u);
  EXPECT_EQ(cores[0].last, 14u);
  std::vector<SampleLabel> out(s.size(), SampleLabel::other);
  refine_saccades(g, s, usable, cores, p, out);
  EXPECT_EQ(letters(out, 8, 24), "oooSSSSSSPPPPooo");

  usable[22] = false;  // the bump never comes back to rest before lost data
  std::vector<SampleLabel> cut(s.size(), SampleLabel::other);
  refine_saccades(g, s, usable, cores_above(s, usable, 45.0), p, cut);
  EXPECT_EQ(letters(cut, 8, 24), "oooSSSSSSooooooo");
}

// The glissade window's far edge, decided (our rule; Nystrom & Holmqvist
// 2010 look for a glissade within a fixed time after the offset, from
// memory): a sample exactly max_glissade_ms after the offset's minimum is
// still inside the window. The trace of OnsetOffsetAndGlissadeByHand with a
// window of 1 ms (one sample at 1000 Hz): the minimum is sample 17, so the
// window holds sample 18 only; at 35 deg/s it is above the offset threshold
// (28.2), so 17-20 are still the glissade, up to the next minimum (21).
TEST(NystromHolmqvistRule, GlissadeWindowHoldsItsLastSample) {
  std::vector<double> s;
  for (int i = 0; i <= 10; ++i) s.push_back(i % 2 ? 12 : 18);
  for (double v : {40, 80, 150, 90, 45, 29, 27, 35, 50, 33, 26, 27}) s.push_back(v);
  for (int i = 23; i < 70; ++i) s.push_back(i % 2 ? 12 : 18);
  const GazeTrace g = trace_of(std::vector<double>(s.size(), 0.0), std::vector<double>(s.size(), 0.0), 1000);
  SaccadeRefinementParams p;
  p.onset_threshold_deg_s = 30;
  p.offset_onset_weight = 0.7;
  p.local_noise_window_ms = 4;
  p.max_glissade_ms = 1;
  p.min_saccade_ms = 5;
  const std::vector<bool> usable(s.size(), true);
  std::vector<SampleLabel> out(s.size(), SampleLabel::other);
  refine_saccades(g, s, usable, cores_above(s, usable, 45.0), p, out);
  EXPECT_EQ(letters(out, 8, 24), "oooSSSSSSPPPPooo");
}

// Glissades after a method's own saccades (walk_boundaries = false: I-VT and
// Engbert & Kliegl with glissades = 1), by Nystrom & Holmqvist's (2010)
// glissade criterion, worked by hand on the speeds of
// OnsetOffsetAndGlissadeByHand with a velocity threshold of 45 deg/s:
//  - Cores: 12-14 (80, 150, 90) and 19 (50); sample 15 (45) is not above 45.
//    The saccade stays 12-14: no onset or offset walk.
//  - Offset threshold: the local noise over the 4 samples before the core's
//    own onset, 8-11 (18, 12, 18, 40): mean 22, SD sqrt(598 - 484) = 10.677,
//    mean + 3 SD = 54.03; 0.7 x 30 + 0.3 x 54.03 = 37.21.
//  - Coming to rest: the first local minimum below 37.21 after 14 is 17 (27,
//    then 35); within 40 ms after it, 19 (50) is above 37.21: a glissade, up
//    to the next local minimum below 37.21, 21 (26, then 27). Every sample
//    from the saccade's end to that minimum, 15-20, is the glissade; core 19
//    lies inside it.
//  - With sample 19 at 36 (below 37.21) no bump follows: nothing is added,
//    and the samples after the saccade keep the method's own labels.
TEST(GlissadeAfterAnySaccade, MethodsOwnSaccadeKeptAndGlissadeByHand) {
  std::vector<double> s;
  for (int i = 0; i <= 10; ++i) s.push_back(i % 2 ? 12 : 18);
  for (double v : {40, 80, 150, 90, 45, 29, 27, 35, 50, 33, 26, 27}) s.push_back(v);
  for (int i = 23; i < 70; ++i) s.push_back(i % 2 ? 12 : 18);
  const GazeTrace g = trace_of(std::vector<double>(s.size(), 0.0), std::vector<double>(s.size(), 0.0), 1000);
  SaccadeRefinementParams p;
  p.onset_threshold_deg_s = 30;
  p.offset_onset_weight = 0.7;
  p.local_noise_window_ms = 4;
  p.max_glissade_ms = 40;
  p.walk_boundaries = false;
  const std::vector<bool> usable(s.size(), true);
  std::vector<SampleLabel> out(s.size(), SampleLabel::other);
  refine_saccades(g, s, usable, cores_above(s, usable, 45.0), p, out);
  EXPECT_EQ(letters(out, 8, 24), "ooooSSSPPPPPPooo");

  s[19] = 36;
  std::vector<SampleLabel> none(s.size(), SampleLabel::other);
  refine_saccades(g, s, usable, cores_above(s, usable, 45.0), p, none);
  EXPECT_EQ(letters(none, 8, 24), "ooooSSSooooooooo");
}

// The switch is 0 or 1 (our rule): anything else is a typing slip.
TEST(GlissadeAfterAnySaccade, SwitchIsZeroOrOne) {
  for (const char* method : {"ivt", "engbert_kliegl"}) {
    DetectionSpec spec;
    spec.method = method;
    spec.parameters = {{"glissades", 0.5}};
    EXPECT_THROW(make_detector(spec), std::invalid_argument) << method;
    spec.parameters = {{"glissades", 0}};
    EXPECT_NO_THROW(make_detector(spec)) << method;
  }
}

// Engbert & Kliegl (2003), section 2 (from memory): a saccade needs at
// least min_saccade_samples (3) supra-threshold samples in a row; exactly 3
// is enough, 2 is not. The triangle wave of EllipseNotAxesNorSpeed (sigma
// per axis = the segment's own velocity u, eta = 6 u), with shorter probes
// of 4.5 u per increment. With the weights 1, 2, 2, 1 of the five-sample
// moving difference over the increments d[n-1], d[n], d[n+1], d[n+2], a
// sample moves at 4.5 u (0.75 eta per axis: 1.125 > 1, outside the ellipse)
// only when all four increments are in the probe; a probe of increments
// a..b gives b - a - 2 such samples. Probe A, increments 85-90: samples
// 86-88, three, a saccade. Its edge samples: 85 and 89 take 23.5/6 u
// (0.6528 eta per axis: 0.852 < 1), 84 and 90 16.5/6 u: inside. Probe C,
// increments 205-209: samples 206-207, two, no saccade. Each probe has its
// mirror image 20 increments later, so median(v) stays 0 and median(v^2) u^2.
TEST(EngbertKlieglRule, ExactlyTheMinimumSamplesMakeASaccade) {
  std::vector<std::pair<int, int>> step(400);
  for (std::size_t i = 0; i < step.size(); ++i) {
    const int sign = (i / 20) % 2 == 0 ? 1 : -1;
    step[i] = {2 * sign, 6 * sign};
  }
  for (std::size_t i = 85; i <= 90; ++i) step[i] = {9, 27}, step[i + 20] = {-9, -27};      // probe A and its mirror
  for (std::size_t i = 205; i <= 209; ++i) step[i] = {9, 27}, step[i + 20] = {-9, -27};    // probe C and its mirror
  std::vector<double> x(400), y(400);
  for (std::size_t i = 1; i < 400; ++i) {
    x[i] = x[i - 1] + step[i].first / 128.0;
    y[i] = y[i - 1] + step[i].second / 128.0;
  }
  const GazeTrace g = trace_of(x, y, 4000);
  EngbertKlieglParams p;
  ASSERT_EQ(p.min_saccade_samples, 3);
  std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
  const ParameterList fitted = EngbertKlieglDetector(p).label(g, labels);
  EXPECT_NEAR(fitted.at("threshold_x_deg_s"), 23.4375, 1e-9);
  EXPECT_EQ(letters(labels, 84, 91), "FFSSSFF");
  EXPECT_EQ(letters(labels, 104, 111), "FFSSSFF");
  EXPECT_EQ(letters(labels, 200, 240), std::string(40, 'F'));
}

// I-VT (Salvucci & Goldberg 2000, section on I-VT, from memory: points
// below the threshold are fixation points, the others saccade points). Our
// decision: a sample exactly at the threshold is a saccade sample. With
// point-to-point velocity v = dx / dt, dt = (1000 us) x 1e-6 s, a step of
// 0.05 deg at sample 3 moves at exactly 0.05 / (1000 x 1e-6) deg/s (the
// definition, evaluated as written); with that as the threshold, sample 3
// is a saccade sample, and with the next larger double it is a fixation sample.
TEST(VelocityThresholdRule, ExactlyAtTheThresholdIsASaccadeSample) {
  const GazeTrace g = trace_of({0.0, 0.0, 0.0, 0.05, 0.05, 0.05}, std::vector<double>(6, 0.0), 1000);
  const double at = 0.05 / (static_cast<double>(1000) * 1e-6);
  auto run = [&](double threshold) {
    VelocityThresholdParams p;
    p.velocity.method = VelocityMethod::two_point;
    p.velocity_threshold_deg_s = threshold;
    std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
    VelocityThresholdDetector(p).label(g, labels);
    return letters(labels, 0, g.size());
  };
  EXPECT_EQ(run(at), "FFFSFF");
  EXPECT_EQ(run(std::nextafter(at, 1e300)), "FFFFFF");
  EXPECT_EQ(run(std::nextafter(at, 0.0)), "FFFSFF");
}

// What is a blink (our rules, README "Event detection"; the 70-500 ms range
// is common practice, no source). With a pupil signal, missing gaze and
// pupil is a blink when the gap, from the last sample before to the first
// after, lasts blink_min_ms to blink_max_ms, both ends included. At 1000 Hz
// a run of L lost samples is a gap of L + 1 ms: 69 lost samples make 70 ms,
// a blink; 68 make 69 ms, track loss; 499 make 500 ms, a blink; 500 make
// 501 ms, track loss.
TEST(BlinkRule, DurationLimitsAreIncluded) {
  auto label_gap = [](std::size_t lost) {
    GazeTrace g = trace_of(std::vector<double>(800, 0.0), std::vector<double>(800, 0.0), 1000);
    lose(g, 100, 100 + lost);
    BlinkParams p;
    p.blink_min_ms = 70;
    p.blink_max_ms = 500;
    return label_missing(g, p)[100];
  };
  EXPECT_EQ(label_gap(69), SampleLabel::blink);
  EXPECT_EQ(label_gap(68), SampleLabel::loss);
  EXPECT_EQ(label_gap(499), SampleLabel::blink);
  EXPECT_EQ(label_gap(500), SampleLabel::loss);
}

// The lid artefacts either side of a blink join it while the gaze moves
// faster than in a fixation, but no further than the paddings (our rule).
// The boundary is included: with 30 ms of padding at 1000 Hz, the sample
// exactly 30 ms before the first lost sample is part of the blink and the
// one 31 ms before is not; likewise 30 ms after the last lost sample. Here
// the gaze sweeps down at 200 deg/s for 60 ms on both sides of a 100 ms gap
// (faster than the still, noise-free fixations around it), so only the
// paddings stop the blink. Without a pupil signal, the lost samples and
// the artefacts together make the blink: here 30 + 100 + 30 ms.
TEST(BlinkRule, PaddingLimitIsIncluded) {
  for (bool pupil : {true, false}) {
    std::vector<double> y(600, 0.0);
    for (std::size_t i = 240; i < 300; ++i) y[i] = 0.2 * static_cast<double>(i - 239);            // down before the gap
    for (std::size_t i = 300; i < 400; ++i) y[i] = 12.0;
    for (std::size_t i = 400; i < 460; ++i) y[i] = 0.2 * static_cast<double>(460 - i);            // and back up after it
    GazeTrace g = trace_of(std::vector<double>(600, 0.0), y, 1000, pupil);
    lose(g, 300, 400);
    BlinkParams p;
    p.padding_before_ms = p.padding_after_ms = 30;
    const std::vector<SampleLabel> labels = label_missing(g, p);
    EXPECT_EQ(labels[270], SampleLabel::blink) << "30 ms before, pupil " << pupil;
    EXPECT_EQ(labels[269], SampleLabel::other) << "31 ms before, pupil " << pupil;
    EXPECT_EQ(labels[429], SampleLabel::blink) << "30 ms after, pupil " << pupil;
    EXPECT_EQ(labels[430], SampleLabel::other) << "31 ms after, pupil " << pupil;
  }
}

// A saccade glued to lost data or a blink is an artefact and is dropped
// (our rule): one whose last sample touches the first lost sample is
// dropped; with one fixation sample between them it stays. (No fixation is
// joined across the gap here, so the dropped samples stay "other".)
TEST(BlinkRule, SaccadeTouchingLostDataIsDropped) {
  const GazeTrace g = trace_of(std::vector<double>(100, 0.0), std::vector<double>(100, 0.0), 1000);
  using L = SampleLabel;
  auto tidy = [&](std::size_t fixation_between) {
    std::vector<L> labels(100, L::fixation);
    for (std::size_t i = 40; i < 55; ++i) labels[i] = L::saccade;  // 15 ms
    for (std::size_t i = 55 + fixation_between; i < 60 + fixation_between; ++i) labels[i] = L::loss;
    EventParams p;
    p.min_fixation_ms = 0;
    p.max_fixation_gap_ms = 0;
    tidy_labels(g, p, labels);
    return labels[47];
  };
  EXPECT_EQ(tidy(0), L::other);
  EXPECT_EQ(tidy(1), L::saccade);
}

// The shortest fixation, decided (our rule, README "Event detection"; a
// minimum duration is common practice, no source): a fixation run lasting
// exactly min_fixation_ms stays, a shorter one becomes "other". A run
// covers its samples, from the first to one interval after the last: at
// 1000 Hz, 40 samples last 40 ms (kept with a 40 ms minimum), 39 last 39 ms.
TEST(FixationRule, ExactlyTheMinimumDurationStays) {
  const GazeTrace g = trace_of(std::vector<double>(100, 0.0), std::vector<double>(100, 0.0), 1000);
  using L = SampleLabel;
  auto tidy = [&](std::size_t samples) {
    std::vector<L> labels(100, L::other);
    for (std::size_t i = 10; i < 10 + samples; ++i) labels[i] = L::fixation;
    EventParams p;
    p.min_fixation_ms = 40;
    tidy_labels(g, p, labels);
    return labels[20];
  };
  EXPECT_EQ(tidy(40), L::fixation);
  EXPECT_EQ(tidy(39), L::other);
}

// Blink paddings before and after are separate settings (our rule, README
// "Event detection"): the trace of PaddingLimitIsIncluded with 30 ms before
// and 10 ms after. The gap is samples 300-399 at 1000 Hz; 30 ms before its
// first sample is sample 270, 10 ms after its last is sample 409.
TEST(BlinkRule, PaddingBeforeAndAfterAreTheirOwn) {
  for (bool pupil : {true, false}) {
    std::vector<double> y(600, 0.0);
    for (std::size_t i = 240; i < 300; ++i) y[i] = 0.2 * static_cast<double>(i - 239);
    for (std::size_t i = 300; i < 400; ++i) y[i] = 12.0;
    for (std::size_t i = 400; i < 460; ++i) y[i] = 0.2 * static_cast<double>(460 - i);
    GazeTrace g = trace_of(std::vector<double>(600, 0.0), y, 1000, pupil);
    lose(g, 300, 400);
    BlinkParams p;
    p.padding_before_ms = 30;
    p.padding_after_ms = 10;
    const std::vector<SampleLabel> labels = label_missing(g, p);
    EXPECT_EQ(labels[270], SampleLabel::blink) << "30 ms before, pupil " << pupil;
    EXPECT_EQ(labels[269], SampleLabel::other) << "31 ms before, pupil " << pupil;
    EXPECT_EQ(labels[409], SampleLabel::blink) << "10 ms after, pupil " << pupil;
    EXPECT_EQ(labels[410], SampleLabel::other) << "11 ms after, pupil " << pupil;
  }
}

// The default paddings are limits, and the one after a blink is the longer
// (event_detector.h, BlinkParams: the lid opens more slowly than it closes,
// Evinger, Manning & Sibony 1991, from memory). At 1000 Hz the gaze sweeps
// down for 60 ms before a 100 ms gap and comes back at 150 deg/s for 80 ms
// after it, then rests. Before the gap the 50 ms limit stops the blink (the
// sample 50 ms before the first lost one is in, 51 ms is not); after it the
// whole 80 ms return is in (with 50 ms it was cut at sample 449), and the
// speed, not the 100 ms limit, ends the blink: the samples 95-99 ms after
// the gap are at rest and stay out. Worked from the trace by hand.
TEST(BlinkRule, DefaultPaddingAfterTakesInTheSlowerReturn) {
  for (bool pupil : {true, false}) {
    std::vector<double> y(700, 0.0);
    for (std::size_t i = 240; i < 300; ++i) y[i] = 0.2 * static_cast<double>(i - 239);
    for (std::size_t i = 300; i < 400; ++i) y[i] = 12.0;
    for (std::size_t i = 400; i < 480; ++i) y[i] = 0.15 * static_cast<double>(480 - i);
    GazeTrace g = trace_of(std::vector<double>(700, 0.0), y, 1000, pupil);
    lose(g, 300, 400);
    const std::vector<SampleLabel> labels = label_missing(g, BlinkParams{});
    EXPECT_EQ(labels[250], SampleLabel::blink) << "50 ms before, pupil " << pupil;
    EXPECT_EQ(labels[249], SampleLabel::other) << "51 ms before, pupil " << pupil;
    EXPECT_EQ(labels[450], SampleLabel::blink) << "51 ms after, pupil " << pupil;
    EXPECT_EQ(labels[479], SampleLabel::blink) << "the return's last sample, pupil " << pupil;
    for (std::size_t i = 495; i < 500; ++i) EXPECT_EQ(labels[i], SampleLabel::other) << i << ", pupil " << pupil;
  }
}

// A saccade's direction, as pipeline/events.h defines it: 0 deg rightwards,
// 90 deg downwards on the screen (y grows downwards), i.e. atan2(dy, dx) of
// its first and last samples (common practice, no source). Worked by hand:
// straight down by 2 deg: 90 deg; right 1 and up 1: -45 deg.
TEST(SaccadeEvents, DirectionZeroRightwardsNinetyDownwards) {
  std::vector<double> x(40, 0.0), y(40, 0.0);
  for (std::size_t i = 10; i < 40; ++i) y[i] = i < 15 ? 0.5 * static_cast<double>(i - 10) : 2.0;  // samples 10-14: 0 to 2
  for (std::size_t i = 25; i < 40; ++i) {
    x[i] = i < 30 ? 0.25 * static_cast<double>(i - 25) : 1.0;  // samples 25-29: right 1 and up 1
    y[i] = i < 30 ? 2.0 - 0.25 * static_cast<double>(i - 25) : 1.0;
  }
  const GazeTrace g = trace_of(x, y, 1000);
  std::vector<SampleLabel> labels(40, SampleLabel::fixation);
  for (std::size_t i = 10; i < 15; ++i) labels[i] = SampleLabel::saccade;
  for (std::size_t i = 25; i < 30; ++i) labels[i] = SampleLabel::saccade;
  DetectedEvents ev;
  collect_events(g, labels, "1", Eye::left, ev);
  ASSERT_EQ(ev.saccades.size(), 2u);
  EXPECT_NEAR(ev.saccades[0].direction_deg, 90.0, 1e-9);
  EXPECT_NEAR(ev.saccades[0].amplitude_deg, 2.0, 1e-9);
  EXPECT_NEAR(ev.saccades[1].direction_deg, -45.0, 1e-9);
}

// Joining a fixation across lost samples, decided (our rule, README "Event
// detection"): the gap is the time the lost samples cover, one interval
// each, and a gap of exactly max_fixation_gap_ms is joined. At 1000 Hz with
// a 20 ms limit: 20 lost samples (from the last fixation sample to the next
// is 21 ms, the gap 20 ms) are joined; 21 lost samples are not.
TEST(FixationRule, AGapOfExactlyTheLimitIsJoined) {
  const GazeTrace g = trace_of(std::vector<double>(100, 0.0), std::vector<double>(100, 0.0), 1000);
  using L = SampleLabel;
  auto tidy = [&](std::size_t lost) {
    std::vector<L> labels(100, L::fixation);
    for (std::size_t i = 40; i < 40 + lost; ++i) labels[i] = L::loss;
    EventParams p;
    p.max_fixation_gap_ms = 20;
    tidy_labels(g, p, labels);
    return labels[40];
  };
  EXPECT_EQ(tidy(20), L::fixation);
  EXPECT_EQ(tidy(21), L::loss);
}

// Fixations are joined across a gap only when the gaze on both sides is
// within max_fixation_gap_shift_deg (0.5 deg by default, detectors/event_detector.h)
// as a distance in the plane (common practice, no source). At 1000 Hz,
// samples 40-49 lost (a gap of 50 - 39 = 11 ms, under the 20 ms limit), x
// the same on both sides: a vertical shift of 1.0 deg is more than 0.5 deg,
// so the gap stays lost; a vertical shift of 0.3 deg is joined.
TEST(FixationRule, AGapIsJoinedOnlyWhenTheVerticalShiftIsSmallToo) {
  using L = SampleLabel;
  auto tidy = [&](double dy) {
    std::vector<double> y(100, 0.0);
    for (std::size_t i = 50; i < 100; ++i) y[i] = dy;
    const GazeTrace g = trace_of(std::vector<double>(100, 0.0), y, 1000);
    std::vector<L> labels(100, L::fixation);
    for (std::size_t i = 40; i < 50; ++i) labels[i] = L::loss;
    EventParams p;
    tidy_labels(g, p, labels);
    return labels[45];
  };
  EXPECT_EQ(tidy(1.0), L::loss);
  EXPECT_EQ(tidy(0.3), L::fixation);
}

// A saccade run that moves faster than max_velocity_deg_s (1000 deg/s by
// default, detectors/event_detector.h) between two samples is noise and
// becomes "other". At 1000 Hz a sample step lasts 1 ms, so 1000 deg/s is
// 1 deg per step. Samples 40-54 (15 ms, over the 10 ms minimum) are a
// saccade moving 0.5 deg per step (500 deg/s): kept. With one step of
// 2 deg (2000 deg/s) at sample 47 the run is noise.
TEST(SaccadeRule, ASampleStepFasterThanTheLimitIsNoise) {
  using L = SampleLabel;
  auto tidy = [&](double jump) {
    std::vector<double> x(100, 0.0);
    for (std::size_t i = 40; i < 100; ++i) x[i] = 0.5 * static_cast<double>(std::min<std::size_t>(i, 54) - 39) + (i >= 47 ? jump : 0.0);
    const GazeTrace g = trace_of(x, std::vector<double>(100, 0.0), 1000);
    std::vector<L> labels(100, L::fixation);
    for (std::size_t i = 40; i < 55; ++i) labels[i] = L::saccade;
    EventParams p;
    tidy_labels(g, p, labels);
    return labels[47];
  };
  EXPECT_EQ(tidy(0.0), L::saccade);
  EXPECT_EQ(tidy(1.5), L::other);
}
