// Building blocks of detection checked against outside sources, each named
// beside its check.

#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <random>
#include <sstream>

#include "detectors/dispersion_threshold_detector.h"
#include "detectors/engbert_kliegl_detector.h"
#include "detectors/event_detector.h"
#include "detectors/median.h"
#include "detectors/nystrom_holmqvist_detector.h"
#include "detectors/savitzky_golay.h"
#include "detectors/scoring.h"
#include "detectors/timestamp_gaps.h"
#include "detectors/velocity.h"
#include "detectors/velocity_threshold_detector.h"
#include "detectors/visual_angle.h"

using namespace gazemill;

namespace {

std::vector<double> scaled(const std::vector<double>& v, double k) {
  std::vector<double> out;
  for (double x : v) out.push_back(x * k);
  return out;
}

void expect_near_all(const std::vector<double>& got, const std::vector<double>& want, double tol) {
  ASSERT_EQ(got.size(), want.size());
  for (std::size_t i = 0; i < got.size(); ++i) EXPECT_NEAR(got[i], want[i], tol) << "index " << i;
}

// A trace in "degrees" straight from values (no screen), for hand-made inputs.
GazeTrace trace_of(const std::vector<std::pair<double, double>>& pts, Microseconds interval_us) {
  GazeTrace g;
  for (std::size_t i = 0; i < pts.size(); ++i) {
    g.time_us.push_back(static_cast<Microseconds>(i) * interval_us);
    g.x_deg.push_back(pts[i].first);
    g.y_deg.push_back(pts[i].second);
    g.x_px.push_back(pts[i].first);
    g.y_px.push_back(pts[i].second);
    g.pupil.push_back(1000.f);
    g.valid.push_back(1);
  }
  g.interval_us = static_cast<double>(interval_us);
  return g;
}

// The hand-made 30-sample trace of methods.md Appendix A (100 Hz).
std::vector<std::pair<double, double>> appendix_a_trace() {
  const double jit[] = {0.0, 0.1, -0.1, 0.2, -0.2, 0.1, 0.0, -0.1, 0.2, 0.0, 0.1, -0.1};
  const double jit2[] = {0.0, 0.1, 0.2, -0.1, 0.0, 0.1, -0.2, 0.0, 0.1, 0.0, -0.1, 0.2, 0.1, 0.0, -0.1};
  std::vector<std::pair<double, double>> pts;
  for (double j : jit) pts.emplace_back(0.0 + j, 0.0 + j / 2);
  pts.emplace_back(1.5, 0.0);
  pts.emplace_back(3.0, 0.0);
  pts.emplace_back(4.5, 0.0);
  for (double j : jit2) pts.emplace_back(5.0 + j, 1.0 - j);
  return pts;
}

std::string run_python(const std::string& code) {
  FILE* p = popen(("/usr/bin/python3 -c \"" + code + "\"").c_str(), "r");
  std::string out;
  char buf[4096];
  while (p && fgets(buf, sizeof buf, p)) out += buf;
  if (p) pclose(p);
  return out;
}

}  // namespace

// Savitzky & Golay (1964) tables as integers over a norm (the corrected values;
// methods.md section 4 checked them against scipy 1.10).
TEST(SavitzkyGolay, PublishedTableIntegers) {
  expect_near_all(savitzky_golay_coefficients(5, 2, 0), scaled({-3, 12, 17, 12, -3}, 1.0 / 35), 1e-12);
  expect_near_all(savitzky_golay_coefficients(7, 2, 0), scaled({-2, 3, 6, 7, 6, 3, -2}, 1.0 / 21), 1e-12);
  expect_near_all(savitzky_golay_coefficients(9, 3, 0), scaled({-21, 14, 39, 54, 59, 54, 39, 14, -21}, 1.0 / 231), 1e-12);
  expect_near_all(savitzky_golay_coefficients(5, 2, 1), scaled({-2, -1, 0, 1, 2}, 1.0 / 10), 1e-12);
  expect_near_all(savitzky_golay_coefficients(7, 2, 1), scaled({-3, -2, -1, 0, 1, 2, 3}, 1.0 / 28), 1e-12);
  expect_near_all(savitzky_golay_coefficients(5, 3, 1), scaled({1, -8, 0, 8, -1}, 1.0 / 12), 1e-12);
  expect_near_all(savitzky_golay_coefficients(7, 3, 1), scaled({22, -67, -58, 0, 58, 67, -22}, 1.0 / 252), 1e-12);
  expect_near_all(savitzky_golay_coefficients(9, 4, 1), scaled({86, -142, -193, -126, 0, 126, 193, 142, -86}, 1.0 / 1188), 1e-12);
  // Second derivative includes the 2! factor, as scipy does: (2, -1, -2, -1, 2) / 7.
  expect_near_all(savitzky_golay_coefficients(5, 2, 2), scaled({2, -1, -2, -1, 2}, 1.0 / 7), 1e-12);
  EXPECT_THROW(savitzky_golay_coefficients(4, 2, 1), std::invalid_argument);
  EXPECT_THROW(savitzky_golay_coefficients(5, 5, 1), std::invalid_argument);
}

// Reference library: scipy.signal.savgol_coeffs(w, p, deriv, pos=..., use='dot') via /usr/bin/python3,
// including the off-centre positions used at the edges of a stretch of data.
TEST(SavitzkyGolay, MatchesScipyIncludingOffCentrePositions) {
  struct C { int w, p, d, pos; };
  const std::vector<C> cases = {{5, 2, 1, 0}, {11, 2, 1, 0}, {21, 2, 1, 0}, {11, 3, 1, 0}, {21, 2, 2, 0},
                                {11, 2, 1, -5}, {11, 2, 1, -2}, {11, 2, 1, 4}, {21, 2, 2, -10}, {9, 3, 1, 3}};
  std::string code = "from scipy.signal import savgol_coeffs as s\n";
  for (const auto& c : cases) {
    code += "print(' '.join(repr(float(v)) for v in s(" + std::to_string(c.w) + "," + std::to_string(c.p) + ",deriv=" +
            std::to_string(c.d) + ",pos=" + std::to_string(c.w / 2 + c.pos) + ",use='dot')))\n";
  }
  std::istringstream out(run_python(code));
  for (const auto& c : cases) {
    std::string line;
    ASSERT_TRUE(std::getline(out, line)) << "scipy gave no answer; is python3-scipy installed?";
    std::istringstream nums(line);
    std::vector<double> want;
    double v;
    while (nums >> v) want.push_back(v);
    expect_near_all(savitzky_golay_coefficients_at(c.w, c.p, c.d, c.pos), want, 1e-9);
  }
}

// Smoothing: a least-squares fit of order p reproduces any polynomial of
// degree <= p exactly (Savitzky & Golay 1964). Each stretch of usable samples,
// ended by missing data or by a gap in the timestamps, equals
// scipy.signal.savgol_filter(x, w, 2, mode='interp') of that stretch alone,
// via /usr/bin/python3 (mode='interp' fits the first and last window
// off-centre, as we do at every edge); a stretch shorter than the window
// keeps its own values (our rule).
TEST(SavitzkyGolay, SmoothingMatchesScipyStretchByStretch) {
  const int w = 9;
  std::vector<double> quad;
  for (int i = 0; i < 40; ++i) quad.push_back(0.5 + 0.25 * i - 0.01 * i * i);
  expect_near_all(savitzky_golay_smooth(quad, std::vector<bool>(quad.size(), true), {}, w, 2), quad, 1e-9);

  std::vector<double> x;
  std::mt19937 rng(5);
  std::normal_distribution<double> noise(0.0, 0.2);
  for (int i = 0; i < 80; ++i) x.push_back(std::stod(std::to_string(std::sin(i / 7.0) + noise(rng))));
  // Usable: 0-29, then 31-35 (shorter than the window), then 37-59 and,
  // after a gap in the timestamps before sample 60, 60-79.
  std::vector<bool> usable(x.size(), true);
  usable[30] = usable[36] = false;
  std::vector<bool> gap_before(x.size(), false);
  gap_before[60] = true;
  const std::vector<std::pair<int, int>> stretches = {{0, 30}, {37, 60}, {60, 80}};
  std::string code = "import numpy as np\nfrom scipy.signal import savgol_filter\nx = np.array([";
  for (double v : x) code += std::to_string(v) + ",";
  code += "])\n";
  for (const auto& [a, b] : stretches) {
    code += "print(' '.join(repr(float(v)) for v in savgol_filter(x[" + std::to_string(a) + ":" + std::to_string(b) +
            "], " + std::to_string(w) + ", 2, mode='interp')))\n";
  }
  std::istringstream out(run_python(code));
  const std::vector<double> got = savitzky_golay_smooth(x, usable, gap_before, w, 2);
  for (const auto& [a, b] : stretches) {
    std::string line;
    ASSERT_TRUE(std::getline(out, line)) << "scipy gave no answer; is python3-scipy installed?";
    std::istringstream nums(line);
    double v;
    for (int i = a; i < b; ++i) {
      ASSERT_TRUE(nums >> v);
      EXPECT_NEAR(got[i], v, 1e-9) << "sample " << i;
    }
  }
  for (int i = 30; i <= 36; ++i) EXPECT_EQ(got[i], x[i]) << "sample " << i << " should keep its own value";
}

// Visual angle: 1 cm at 57.3 cm is about 1 deg (common practice, no source);
// exact values 2 atan(s / 2d) from methods.md section 5 (computed there).
TEST(VisualAngle, RuleOfThumbAndExactValues) {
  EXPECT_NEAR(visual_angle_deg(10.0, 572.943), 1.0, 1e-4);
  EXPECT_NEAR(visual_angle_deg(10.0, 570.0), 1.005163, 1e-6);
  EXPECT_NEAR(VisualAngle({1920, 1080, 530.0, 300.0, 700.0}).pixels_per_degree_at_centre(), 44.2600, 1e-4);
  EXPECT_NEAR(VisualAngle({1024, 768, 386.0, 290.0, 600.0}).pixels_per_degree_at_centre(), 27.7813, 1e-4);
  EXPECT_NEAR(VisualAngle({1920, 1080, 472.0, 265.0, 570.0}).pixels_per_degree_at_centre(), 40.4690, 1e-4);
  const VisualAngle a({1920, 1080, 530.0, 300.0, 700.0});
  // The screen edge is half the width from the centre: atan(265 / 700) = 20.735 deg, not the small-angle 21.69.
  EXPECT_NEAR(a.x_deg(1920), std::atan(265.0 / 700.0) * 180 / M_PI, 1e-9);
  EXPECT_NEAR(a.x_deg(1920) - a.x_deg(0), 41.4705, 1e-4);
  EXPECT_NEAR(a.x_px(a.x_deg(1234.5)), 1234.5, 1e-9);
  EXPECT_NEAR(a.y_px(a.y_deg(17.25)), 17.25, 1e-9);
  EXPECT_DOUBLE_EQ(a.x_deg(960), 0.0);
}

// Non-square pixels: a screen of 1000 x 500 px and 400 x 100 mm has pixels
// 0.4 mm wide and 0.2 mm high, so the vertical angle must use the height.
// At 500 mm, the bottom edge is 250 px = 50 mm below the centre:
// atan(50 / 500) = 5.710593 deg; the right edge 500 px = 200 mm across:
// atan(200 / 500) = 21.801409 deg (worked by hand; the degrees checked with
// Python's math.atan, common practice, no source).
TEST(VisualAngle, EachAxisUsesItsOwnPixelSize) {
  const VisualAngle a({1000, 500, 400.0, 100.0, 500.0});
  EXPECT_NEAR(a.y_deg(500), 5.710593, 1e-6);
  EXPECT_NEAR(a.y_deg(0), -5.710593, 1e-6);
  EXPECT_NEAR(a.x_deg(1000), 21.801409, 1e-6);
  EXPECT_NEAR(a.y_px(5.710593137499643), 500.0, 1e-6);
}


// The conversion is tabulated per screen (detection converts every sample);
// it must stay the exact formula atan((px - centre) * mm_per_px / d) from the
// C library to far below any tracker's precision, on the screen, off it, at
// whole and fractional pixels, and beyond the table.
TEST(VisualAngle, TabulatedConversionEqualsTheFormula) {
  for (const ScreenGeometry s : {ScreenGeometry{1920, 1080, 530.0, 300.0, 700.0}, ScreenGeometry{1024, 768, 380.0, 300.0, 670.0},
                                 ScreenGeometry{1001, 333, 400.0, 100.0, 450.0}, ScreenGeometry{100000, 333, 40000.0, 100.0, 450.0}}) {
    const VisualAngle a(s);
    const double cx = s.width_px / 2.0, cy = s.height_px / 2.0;
    double worst = 0;
    for (double px = -3.0 * s.width_px; px <= 4.0 * s.width_px; px += 0.173) {
      worst = std::max(worst, std::abs(a.x_deg(px) - std::atan((px - cx) * s.width_mm / s.width_px / s.viewing_distance_mm) * 180 / M_PI));
    }
    for (double px = -3.0 * s.height_px; px <= 4.0 * s.height_px; px += 0.0917) {
      worst = std::max(worst, std::abs(a.y_deg(px) - std::atan((px - cy) * s.height_mm / s.height_px / s.viewing_distance_mm) * 180 / M_PI));
    }
    EXPECT_LT(worst, 1e-12) << s.width_px << " x " << s.height_px;
    EXPECT_TRUE(std::isnan(a.x_deg(std::nan(""))));
    EXPECT_TRUE(std::isnan(a.y_deg(std::nan(""))));
  }
}
// Engbert & Kliegl (2003): the 5-point velocity is exact for a ramp; methods.md
// section 2: x = 0.1 n deg at 250 Hz gives 25.0 deg/s.
TEST(EngbertKliegl, RampVelocityAndMedianBasedSd) {
  std::vector<std::pair<double, double>> ramp;
  for (int n = 0; n < 20; ++n) ramp.emplace_back(0.1 * n, 0.0);
  VelocityParams vp;
  vp.method = VelocityMethod::moving_average;
  const Velocity v = compute_velocity(trace_of(ramp, 4000), vp);
  for (int n = 2; n < 18; ++n) EXPECT_NEAR(v.vx[static_cast<std::size_t>(n)], 25.0, 1e-9);
  EXPECT_TRUE(std::isnan(v.vx[0]));
  // Worked by hand (methods.md section 2): median(v^2) = 2.5, median(v) = 1, sigma = sqrt(1.5).
  EXPECT_NEAR(median_based_sd({1, -2, 3, -1, 2, 0, 50, -1, 1, 2}), 1.224745, 1e-6);
}

// The moving difference widened to K samples either side (our generalisation
// of the published K = 2): sum of (x[n+k] - x[n-k]) over K (K+1) dt is exact
// for a ramp (algebra: the sum is dt * rate * 2 * (1 + ... + K)), and a step
// of 1 deg at 1000 Hz with K = 3 gives, worked by hand, 3 / (12 * 0.001) =
// 250 deg/s at the step and 1 / 0.012 = 83.3 deg/s two samples from it.
TEST(EngbertKliegl, WiderMovingDifference) {
  std::vector<std::pair<double, double>> ramp;
  for (int n = 0; n < 40; ++n) ramp.emplace_back(0.1 * n, -0.05 * n);
  VelocityParams vp;
  vp.method = VelocityMethod::moving_average;
  vp.moving_average_half_width = 4;
  const Velocity v = compute_velocity(trace_of(ramp, 1000), vp);
  for (int n = 4; n < 36; ++n) {
    EXPECT_NEAR(v.vx[static_cast<std::size_t>(n)], 100.0, 1e-9);
    EXPECT_NEAR(v.vy[static_cast<std::size_t>(n)], -50.0, 1e-9);
  }
  EXPECT_TRUE(std::isnan(v.vx[3]));
  EXPECT_TRUE(std::isnan(v.vx[36]));
  std::vector<std::pair<double, double>> step;
  for (int n = 0; n < 12; ++n) step.emplace_back(n < 6 ? 0.0 : 1.0, 0.0);
  vp.moving_average_half_width = 3;
  const Velocity s = compute_velocity(trace_of(step, 1000), vp);
  EXPECT_NEAR(s.vx[5], 250.0, 1e-9);  // x[6..8] - x[4..2]: all three differences span the step
  EXPECT_NEAR(s.vx[3], 1.0 / 0.012, 1e-9);
  EXPECT_NEAR(s.vx[8], 1.0 / 0.012, 1e-9);
}

// The window keeps its span in ms across rates and never drops below the
// published five samples: 8 ms is five samples at 500 Hz, the rate of
// Engbert & Mergenthaler (2006) (from memory). The widths are our rule.
TEST(EngbertKliegl, MovingDifferenceSpansTheSameTimeAtEveryRate) {
  EXPECT_EQ(moving_average_half_width(8.0, 4000), 2);  // 250 Hz: five samples, 16 ms
  EXPECT_EQ(moving_average_half_width(8.0, 2000), 2);  // 500 Hz: 8 ms
  EXPECT_EQ(moving_average_half_width(8.0, 1000), 4);  // 1000 Hz: nine samples, 8 ms
  EXPECT_EQ(moving_average_half_width(8.0, 500), 8);   // 2000 Hz: 17 samples, 8 ms
  EXPECT_EQ(moving_average_half_width(0.0, 500), 2);   // 0: always the published five samples
}

// The histogram-narrowed median against the textbook definition (sort, take
// the middle value or the mean of the two middle values; common practice, no
// source), bit for bit, on samples shaped like velocity traces (a crowd near
// zero with a long tail), with ties, with one huge outlier and all equal.
TEST(Median, MatchesTheSortedMiddleExactly) {
  std::mt19937_64 rng(5);
  std::normal_distribution<double> noise(0.0, 7.0);
  std::uniform_real_distribution<double> tail(-600.0, 600.0);
  for (int round = 0; round < 400; ++round) {
    const std::size_t n = 1 + rng() % 6000;
    std::vector<double> v(n);
    for (auto& x : v) {
      const auto kind = rng() % 20;
      x = kind == 0 ? tail(rng) : kind == 1 ? std::round(noise(rng)) : noise(rng);
    }
    if (round % 50 == 7) v[0] = 1e300;                       // one absurd value
    if (round % 50 == 9) std::fill(v.begin(), v.end(), 3.25);  // all equal
    std::vector<double> sorted = v;
    std::sort(sorted.begin(), sorted.end());
    const double expected = n % 2 ? sorted[n / 2] : 0.5 * (sorted[n / 2] + sorted[n / 2 - 1]);
    const double got = median_in_place(v);
    ASSERT_EQ(got, expected) << "n = " << n << ", round " << round;
    std::vector<double> after = v;  // reordered, but every value still there
    std::sort(after.begin(), after.end());
    ASSERT_EQ(after, sorted);
    // The middle pair of the magnitudes, as the Engbert & Kliegl spread uses it.
    for (auto& x : sorted) x = std::abs(x);
    std::sort(sorted.begin(), sorted.end());
    for (auto& x : v) x = std::abs(x);
    const MiddlePair m = middle_pair_in_place(v);
    ASSERT_EQ(m.lower, sorted[(n - 1) / 2]) << "n = " << n << ", round " << round;
    ASSERT_EQ(m.upper, sorted[n / 2]);
  }
}

// I-DT steps of Salvucci & Goldberg (2000) on the hand-made trace of methods.md
// Appendix A (100 Hz, D <= 1.0, a 10-sample window): fixations 0-11 with
// centroid (0.016667, 0.008333) and 15-29 with centroid (5.02, 0.98).
TEST(DispersionThreshold, HandMadeTraceFromThePublishedSteps) {
  const GazeTrace g = trace_of(appendix_a_trace(), 10000);
  EXPECT_EQ(dispersion_window_samples(100, 10000), 10u);
  std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
  DispersionThresholdDetector({1.0, 100.0, 0.0}).label(g, labels);  // raw samples, as published
  std::string got;
  for (auto l : labels) got += l == SampleLabel::fixation ? 'F' : 'S';
  EXPECT_EQ(got, "FFFFFFFFFFFFSSSFFFFFFFFFFFFFFF");
  DetectedEvents ev;
  collect_events(g, labels, "1", Eye::left, ev);
  ASSERT_EQ(ev.fixations.size(), 2u);
  EXPECT_NEAR(ev.fixations[0].x_deg, 0.016667, 1e-6);
  EXPECT_NEAR(ev.fixations[0].y_deg, 0.008333, 1e-6);
  EXPECT_NEAR(ev.fixations[1].x_deg, 5.02, 1e-9);
  EXPECT_NEAR(ev.fixations[1].y_deg, 0.98, 1e-9);
  EXPECT_EQ(ev.fixations[1].start_us, 150000);
}

// I-DT on a 1000 Hz trace whose samples alternate +-0.04 deg around two
// points 2 deg apart: every pair of neighbouring samples is 0.08 deg apart, so
// with a 0.06 deg threshold the paper's raw samples hold no fixation at all.
// Smoothed first (order 2 over 17 samples damps the alternation to
// 0.09 x 0.04 deg; gain from scipy.signal.savgol_coeffs, computed once by hand),
// the same threshold finds both fixations and the ramp between them.
TEST(DispersionThreshold, SmoothingKeepsNoisyFixationsWhole) {
  std::vector<std::pair<double, double>> pts;
  for (int i = 0; i < 150; ++i) pts.emplace_back((i % 2 ? 0.04 : -0.04), 0.0);
  for (int i = 1; i <= 10; ++i) pts.emplace_back(0.2 * i, 0.0);
  for (int i = 0; i < 150; ++i) pts.emplace_back(2.0 + (i % 2 ? 0.04 : -0.04), 0.0);
  const GazeTrace g = trace_of(pts, 1000);
  auto run = [&](double smoothing_ms) {
    std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
    DispersionThresholdDetector({0.06, 24.0, smoothing_ms}).label(g, labels);
    std::string got;
    for (auto l : labels) got += l == SampleLabel::fixation ? 'F' : 'S';
    return got;
  };
  EXPECT_EQ(run(0).find('F'), std::string::npos);
  EXPECT_EQ(smoothing_window_samples(16, 1000), 17);
  const std::string smoothed = run(16);
  // A fixation from the first sample, one run of saccade samples covering
  // the ramp, and a fixation to the last sample.
  const auto first_s = smoothed.find('S');
  const auto second_f = smoothed.find('F', first_s);
  ASSERT_EQ(smoothed.find('F'), 0u) << smoothed;
  ASSERT_NE(second_f, std::string::npos) << smoothed;
  EXPECT_EQ(smoothed.find('S', second_f), std::string::npos) << smoothed;
  EXPECT_LE(first_s, 151u);
  EXPECT_GE(second_f, 159u);
  EXPECT_LT(second_f - first_s, 40u) << smoothed;
}

// The data-driven threshold (our rule, no published source): the median
// dispersion D of windows laid side by side in each stretch of usable
// samples, worked by hand.
TEST(DispersionThreshold, MedianWindowDispersionByHand) {
  const std::vector<double> x = {0.0, 0.1, 0.0, 0.3, 0.3, 0.3};
  const std::vector<double> y = {0.0, 0.0, 0.0, 0.0, 0.0, 0.2};
  const std::vector<bool> all(6, true);
  // Windows of 2: samples 0-1, 2-3, 4-5 give D = 0.1, 0.3, 0.2.
  EXPECT_NEAR(median_window_dispersion(x, y, all, 2), 0.2, 1e-12);
  // Windows of 3: D = 0.1 and 0.2; the mean of the middle pair.
  EXPECT_NEAR(median_window_dispersion(x, y, all, 3), 0.15, 1e-12);
  // No window spans an unusable sample: with sample 2 out, windows of 2 are
  // 0-1 (0.1) and 3-4 (0); sample 5 is left over.
  std::vector<bool> hole = all;
  hole[2] = false;
  EXPECT_NEAR(median_window_dispersion(x, y, hole, 2), 0.05, 1e-12);
  EXPECT_TRUE(std::isnan(median_window_dispersion(x, y, hole, 4)));
}

// With no fixed threshold, I-DT sets it from the trace (our rule; the
// thresholds worked by hand): the same two fixations and ramp are found at
// five times the noise, where a threshold fitted to the quiet trace finds no
// fixation at all.
TEST(DispersionThreshold, ThresholdFromTheDataFollowsTheNoise) {
  auto trace = [](double noise) {
    std::vector<std::pair<double, double>> pts;
    for (int i = 0; i < 150; ++i) pts.emplace_back(i % 2 ? noise : -noise, 0.0);
    for (int i = 1; i <= 10; ++i) pts.emplace_back(0.2 * i, 0.0);
    for (int i = 0; i < 150; ++i) pts.emplace_back(2.0 + (i % 2 ? noise : -noise), 0.0);
    return trace_of(pts, 1000);
  };
  double used_deg = 0;  // the threshold the detector reports it set from the data (NaN: none)
  auto run = [&](const GazeTrace& g, double threshold_deg) {
    std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
    const ParameterList fitted = DispersionThresholdDetector({threshold_deg, 20.0, 0.0}).label(g, labels);
    used_deg = fitted.count("dispersion_threshold_deg") ? fitted.at("dispersion_threshold_deg") : std::nan("");
    std::string got;
    for (auto l : labels) got += l == SampleLabel::fixation ? 'F' : 'S';
    return got;
  };
  // Quiet: 14 of the 15 windows of 20 samples lie inside a fixation and
  // spread 0.04 deg, so the threshold is 0.08; the ramp's last sample, at
  // 2.0 deg, already belongs to the second fixation.
  const std::string quiet = run(trace(0.02), 0.0);
  EXPECT_NEAR(used_deg, 0.08, 1e-12);
  EXPECT_EQ(quiet, std::string(150, 'F') + std::string(9, 'S') + std::string(151, 'F'));
  const GazeTrace noisy = trace(0.1);
  EXPECT_EQ(run(noisy, 0.08).find('F'), std::string::npos);
  EXPECT_TRUE(std::isnan(used_deg));  // a fixed threshold is a parameter, not set from the data
  // Noisy: threshold 0.4 deg, so each fixation takes in the ramp's first or
  // last step (0.2 deg), and the ramp's middle stays a saccade.
  const std::string adapted = run(noisy, 0.0);
  EXPECT_NEAR(used_deg, 0.4, 1e-12);
  const auto first_s = adapted.find('S');
  const auto second_f = adapted.find('F', first_s);
  ASSERT_NE(second_f, std::string::npos) << adapted;
  EXPECT_EQ(adapted.find('S', second_f), std::string::npos) << adapted;
  EXPECT_GE(first_s, 150u);
  EXPECT_LE(second_f, 160u);
  EXPECT_GE(second_f - first_s, 6u) << adapted;
}

// I-DT across gaps in the timestamps with no sample marked missing (a
// tracker that dropped samples). No eye movement was recorded, so no sample
// may become a saccade sample: the smoothing must not draw a ramp across a
// gap, as velocity windows do not span one. Our rule: the sample after the
// gap counts as missing, and the shared clean-up joins the fixations on
// either side as it does across lost samples, only when the gap is short
// (max_fixation_gap_ms, 20 ms) and the eye stayed put.
TEST(DispersionThreshold, NoWindowSpansAGapInTheTimestamps) {
  auto run = [](double shift_deg, Microseconds gap_us) {
    std::vector<std::pair<double, double>> pts;
    for (int i = 0; i < 150; ++i) pts.emplace_back((i % 2 ? 0.01 : -0.01), 0.0);
    for (int i = 0; i < 150; ++i) pts.emplace_back(shift_deg + (i % 2 ? 0.01 : -0.01), 0.0);
    GazeTrace g = trace_of(pts, 1000);
    for (std::size_t i = 150; i < g.size(); ++i) g.time_us[i] += gap_us;
    EXPECT_TRUE(gap_steps(g)[150]);
    const std::vector<SampleLabel> labels =
        label_trace(g, DispersionThresholdDetector({0.06, 20.0, 20.0}), BlinkParams{}, EventParams{});
    for (std::size_t i = 0; i < labels.size(); ++i) EXPECT_NE(labels[i], SampleLabel::saccade) << "sample " << i;
    DetectedEvents ev;
    collect_events(g, labels, "1", Eye::left, ev);
    return ev.fixations;
  };
  const auto apart = run(2.0, 100000);  // 100 ms and 2 deg: two fixations
  ASSERT_EQ(apart.size(), 2u);
  EXPECT_EQ(apart[0].end_us, 150000);
  EXPECT_EQ(apart[1].start_us, 251000);
  EXPECT_NEAR(apart[1].x_deg, 2.0, 1e-3);
  const auto joined = run(0.0, 10000);  // 10 ms, same place: one fixation
  ASSERT_EQ(joined.size(), 1u);
  EXPECT_EQ(joined[0].end_us, 310000);
}

// I-VT with point-to-point (backward) velocities and 100 units/s, methods.md
// Appendix A: labels FFFFFFFFFFFFSSSSFFFFFFFFFFFFFF (sample 15 is a saccade
// sample because its backward difference spans the saccade's last step).
TEST(VelocityThreshold, HandMadeTraceWithBackwardDifferences) {
  const GazeTrace g = trace_of(appendix_a_trace(), 10000);
  VelocityThresholdParams p;
  p.velocity_threshold_deg_s = 100;
  p.velocity.method = VelocityMethod::two_point;
  std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
  VelocityThresholdDetector(p).label(g, labels);
  std::string got;
  for (auto l : labels) got += l == SampleLabel::fixation ? 'F' : 'S';
  EXPECT_EQ(got, "FFFFFFFFFFFFSSSSFFFFFFFFFFFFFF");
}

// Nystrom & Holmqvist (2010): PT = mean + 6 SD of the velocities below PT,
// iterated; for Gaussian noise it settles close to mu + 6 sigma (methods.md
// section 3, computed), and a constant trace gives PT = mu (sigma 0).
TEST(NystromHolmqvist, PeakThresholdIteration) {
  std::vector<double> speed;
  std::vector<bool> usable;
  unsigned s = 12345;
  for (int i = 0; i < 200000; ++i) {
    // Box-Muller on a small LCG: normal(20, 4).
    s = s * 1103515245u + 12345u;
    const double u1 = ((s >> 8) + 1.0) / 16777217.0;
    s = s * 1103515245u + 12345u;
    const double u2 = ((s >> 8) + 1.0) / 16777217.0;
    speed.push_back(20.0 + 4.0 * std::sqrt(-2 * std::log(u1)) * std::cos(2 * M_PI * u2));
    usable.push_back(true);
  }
  NystromHolmqvistParams p;
  const PeakThreshold t = find_peak_threshold(speed, usable, p);
  EXPECT_NEAR(t.mean_deg_s, 20.0, 0.05);
  EXPECT_NEAR(t.sd_deg_s, 4.0, 0.05);
  EXPECT_NEAR(t.peak_deg_s, 44.0, 0.5);
  const PeakThreshold flat = find_peak_threshold(std::vector<double>(100, 3.0), std::vector<bool>(100, true), p);
  EXPECT_DOUBLE_EQ(flat.peak_deg_s, 3.0);
  EXPECT_DOUBLE_EQ(flat.sd_deg_s, 0.0);
}

// Nystrom & Holmqvist (2010) walk from each velocity peak forward to the
// first local velocity minimum below the offset threshold (methods.md
// section 3, from memory). Which side of the saccade the minimum falls on is
// left open there; ours: the minimum is the slowest sample, still at rest,
// so the sample just after the last saccade sample is a local minimum of the
// speed and is labelled fixation. Backwards, the paper walks likewise to a
// minimum below the onset threshold; ours stops at the threshold: the
// sample just before the first saccade sample is the first below it, at rest
// (detectors/saccade_refinement.cpp says why).
TEST(NystromHolmqvist, SaccadeRunsBetweenTheTwoVelocityMinima) {
  std::vector<std::pair<double, double>> pts;
  const double jit[] = {0.0, 0.012, -0.008, 0.015, -0.011, 0.004, -0.014, 0.009};
  for (int i = 0; i < 200; ++i) pts.emplace_back(jit[i % 8], jit[(i + 3) % 8]);
  for (int i = 1; i < 25; ++i) {  // a minimum-jerk movement of 2 deg over 25 ms
    const double t = i / 25.0;
    pts.emplace_back(2.0 * (10 * t * t * t - 15 * t * t * t * t + 6 * t * t * t * t * t), 0.0);
  }
  for (int i = 0; i < 200; ++i) pts.emplace_back(2.0 + jit[i % 8], jit[(i + 5) % 8]);
  const GazeTrace g = trace_of(pts, 1000);
  NystromHolmqvistParams p;
  p.velocity.sg_window_ms = 4;
  p.max_glissade_ms = 0;
  std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
  const double onset = NystromHolmqvistDetector(p).label(g, labels).at("onset_threshold_deg_s");
  std::size_t first = g.size(), last = 0;
  for (std::size_t i = 0; i < g.size(); ++i) {
    if (labels[i] == SampleLabel::saccade) {
      first = std::min(first, i);
      last = i;
    }
  }
  ASSERT_LT(first, last);
  for (std::size_t i = first; i <= last; ++i) EXPECT_EQ(labels[i], SampleLabel::saccade) << "one saccade, sample " << i;
  const std::vector<double> s = compute_velocity(g, p.velocity).speed;
  EXPECT_EQ(labels[first - 1], SampleLabel::fixation);
  EXPECT_LT(s[first - 1], onset) << "the sample before the saccade is below the onset threshold";
  EXPECT_GE(s[first], onset);
  EXPECT_EQ(labels[last + 1], SampleLabel::fixation);
  EXPECT_LE(s[last + 1], s[last + 2]) << "the sample after the saccade is a local minimum";
  EXPECT_LT(s[last + 1], s[last]);
  // The movement itself (samples 200..224) lies inside.
  EXPECT_LE(first, 201u);
  EXPECT_GE(last, 222u);
}

// Cohen (1960): kappa = (po - pe) / (1 - pe). Worked by hand: 40 both, 10 and 5
// one-sided, 45 neither: po = 0.85, pe = 0.5*0.45 + 0.5*0.55 = 0.5, kappa = 0.7.
TEST(Scoring, CohenKappaAndEventMatching) {
  EXPECT_NEAR(cohen_kappa(40, 10, 5, 45), 0.7, 1e-12);
  EXPECT_NEAR(cohen_kappa(50, 0, 0, 50), 1.0, 1e-12);
  using L = SampleLabel;
  const std::vector<L> ref = {L::fixation, L::fixation, L::fixation, L::saccade, L::saccade, L::fixation, L::fixation, L::fixation};
  const std::vector<L> det = {L::fixation, L::fixation, L::saccade, L::saccade, L::fixation, L::fixation, L::fixation, L::fixation};
  std::vector<Microseconds> t;
  for (int i = 0; i < 8; ++i) t.push_back(i * 1000);
  AgreementScorer s;
  s.add(ref, det, t);
  const auto r = s.report();
  const auto& sac = r.classes[1];
  EXPECT_EQ(sac.reference_events, 1u);
  EXPECT_EQ(sac.matched_events, 1u);
  EXPECT_DOUBLE_EQ(sac.mean_onset_difference_ms, -1.0);   // detected one sample early
  EXPECT_DOUBLE_EQ(sac.mean_offset_difference_ms, -1.0);
  EXPECT_EQ(r.confusion[0][1], 1u);
  EXPECT_EQ(r.confusion[1][0], 1u);
  EXPECT_TRUE(std::isnan(r.classes[2].kappa));  // no pso on either side
}
