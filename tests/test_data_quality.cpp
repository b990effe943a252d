// Data-quality figures of the study report (measures/data_quality): precision
// within fixations, sampling regularity, quantiles, histograms, robust
// z-scores, the main sequence and the viewer's binned time course.
#include <gtest/gtest.h>

#include <cmath>
#include <random>
#include <vector>

#include "measures/data_quality.h"

namespace gazemill {
namespace {

const double kNaN = std::nan("");

// Source: Holmqvist, Nyström & Mulvey (2012), RMS-S2S and STD; check values
// COMPUTED in shared/reference/methods.md §11 (x = [0, 1, 0, 1, 0], y = 0,
// unit 1 deg: RMS-S2S = 1.0, STD = 0.489898).
TEST(DataQuality, PrecisionOfTheMethodsCheckValues) {
  const std::vector<double> x = {0, 1, 0, 1, 0}, y = {0, 0, 0, 0, 0};
  const std::vector<std::uint8_t> valid(5, 1);
  const FixationPrecision p = fixation_precision(x, y, valid);
  EXPECT_EQ(p.samples, 5u);
  EXPECT_EQ(p.intervals, 4u);
  EXPECT_NEAR(p.rms_s2s_deg, 1.0, 1e-12);
  EXPECT_NEAR(p.std_deg, 0.489898, 1e-6);
}

// Source: methods.md §11 (Niehorster et al. 2020, from memory): for white
// noise RMS-S2S / STD = sqrt(2) in theory (1.41558 measured there on 200 000
// samples). Here 200 000 samples of our own normal noise (mt19937, seed 1).
TEST(DataQuality, WhiteNoiseRatioIsSqrtTwo) {
  std::mt19937 rng(1);
  std::normal_distribution<double> noise(0.0, 0.05);
  std::vector<double> x(200000), y(200000);
  for (std::size_t i = 0; i < x.size(); ++i) {
    x[i] = 3.0 + noise(rng);
    y[i] = -1.0 + noise(rng);
  }
  const std::vector<std::uint8_t> valid(x.size(), 1);
  const FixationPrecision p = fixation_precision(x, y, valid);
  EXPECT_NEAR(p.rms_s2s_deg / p.std_deg, std::sqrt(2.0), 0.01);
  // Both axes carry noise of SD 0.05: STD pools them, sqrt(2) x 0.05.
  EXPECT_NEAR(p.std_deg, 0.05 * std::sqrt(2.0), 0.001);
}

// Common practice, no source: an interval is only taken between neighbouring
// valid samples, so a lost sample breaks the sequence instead of joining its
// neighbours across the gap (here the 5 deg jump to the lost sample's
// position never counts).
TEST(DataQuality, NoIntervalSpansALostSample) {
  const std::vector<double> x = {0, 1, 5, 1, 0}, y = {0, 0, 0, 0, 0};
  const std::vector<std::uint8_t> valid = {1, 1, 0, 1, 1};
  const FixationPrecision p = fixation_precision(x, y, valid);
  EXPECT_EQ(p.samples, 4u);
  EXPECT_EQ(p.intervals, 2u);
  EXPECT_NEAR(p.rms_s2s_deg, 1.0, 1e-12);
  const std::vector<double> nan_x = {0, kNaN, 1};
  const std::vector<std::uint8_t> all = {1, 1, 1};
  EXPECT_EQ(fixation_precision(nan_x, std::vector<double>{0, 0, 0}, all).intervals, 0u);
  EXPECT_TRUE(std::isnan(fixation_precision(nan_x, std::vector<double>{0, 0, 0}, all).rms_s2s_deg));
}

// Common practice, no source: the measured rate is 1e6 / the median interval;
// a step over twice the median is a gap (as the detectors' gap rule), one
// more than 10 % off the median otherwise irregular.
TEST(DataQuality, SamplingRegularityByHand) {
  // 1000 Hz with one interval of 1200 us (irregular), one of 5000 us (a gap) and a repeated timestamp.
  std::vector<Microseconds> t = {0, 1000, 2000, 3200, 4200, 9200, 10200, 10200, 11200};
  const SamplingRegularity r = sampling_regularity(t);
  EXPECT_EQ(r.intervals, 8u);
  EXPECT_DOUBLE_EQ(r.median_interval_us, 1000.0);
  EXPECT_DOUBLE_EQ(r.measured_rate_hz, 1000.0);
  EXPECT_EQ(r.gaps, 1u);
  EXPECT_EQ(r.longest_gap_us, 5000);
  EXPECT_EQ(r.irregular_intervals, 1u);
  EXPECT_EQ(r.non_increasing, 1u);
  // SD of the six regular intervals {1000, 1000, 1200, 1000, 1000, 1000}: population form.
  EXPECT_NEAR(r.interval_sd_us, std::sqrt((5 * 33.333333 * 33.333333 + 166.666667 * 166.666667) / 6), 1e-3);
  const std::vector<Microseconds> one = {5};
  EXPECT_EQ(sampling_regularity(one).intervals, 0u);
}

// Source: numpy 1.24 (Debian's python3-numpy), np.quantile's default
// ('linear', Hyndman & Fan 1996 definition 7), run on v = [7, 1, 3, 9, 4, 4, 12, 5]:
// p05 1.7, q1 3.75, median 4.5, q3 7.5, p95 10.95.
TEST(DataQuality, QuantilesAsNumpy) {
  const ValueSummary s = summarise({7, 1, 3, 9, 4, 4, 12, 5, kNaN});
  EXPECT_EQ(s.n, 8u);
  EXPECT_NEAR(s.p05, 1.7, 1e-12);
  EXPECT_NEAR(s.q1, 3.75, 1e-12);
  EXPECT_NEAR(s.median, 4.5, 1e-12);
  EXPECT_NEAR(s.q3, 7.5, 1e-12);
  EXPECT_NEAR(s.p95, 10.95, 1e-12);
  EXPECT_NEAR(s.mean, 45.0 / 8.0, 1e-12);
  EXPECT_EQ(s.min, 1);
  EXPECT_EQ(s.max, 12);
  EXPECT_EQ(summarise({}).n, 0u);
  EXPECT_TRUE(std::isnan(summarise({kNaN}).median));
}

// Common practice, no source: values beyond the range land in the end bins, NaN is left out.
TEST(DataQuality, HistogramsClampToTheirEnds) {
  const std::vector<double> v = {-5, 0, 19.9, 20, 55, 1e6, kNaN};
  const Histogram h = histogram(v, 0, 20, 3);
  EXPECT_EQ(h.counts, (std::vector<std::uint64_t>{3, 1, 2}));
  const std::vector<double> x = {0.5, 1.5, 1.5, 9}, y = {10, 10, 30, 30};
  const Histogram2D g = histogram_2d(x, y, 0, 1, 2, 0, 20, 2);
  // cells (x bin, y bin): (0,0) 1; (1,0) 1; (1,1) 2 (1.5 and the clamped 9)
  EXPECT_EQ(g.counts, (std::vector<std::uint64_t>{1, 0, 1, 2}));
}

// Source: Leys et al. (2013), median absolute deviation with the 1.4826
// constant (from memory); values COMPUTED with numpy for v = [2, 10, 4, 6, 8, 40]:
// median 7, MAD 3, z(40) = 33 / (1.4826 x 3) = 7.4194.
TEST(DataQuality, RobustZScores) {
  const std::vector<double> v = {2, 10, 4, 6, 8, 40};
  const auto z = robust_z_scores(v);
  ASSERT_EQ(z.size(), v.size());
  EXPECT_NEAR(z[5], 7.419398354, 1e-8);
  EXPECT_NEAR(z[0], -1.124151266, 1e-8);
  EXPECT_NEAR(z[1], 0.674490759, 1e-8);
  // Too few values, or no spread: nothing to judge against.
  EXPECT_TRUE(std::isnan(robust_z_scores(std::vector<double>{1, 2})[0]));
  EXPECT_TRUE(std::isnan(robust_z_scores(std::vector<double>{3, 3, 3, 9})[3]));
  const auto with_nan = robust_z_scores(std::vector<double>{2, kNaN, 10, 4, 6, 8, 40});
  EXPECT_TRUE(std::isnan(with_nan[1]));
  EXPECT_NEAR(with_nan[6], 7.419398354, 1e-8);
}

// Source: methods.md §6 check values COMPUTED from V = Vmax (1 - exp(-A / C)):
// A 5 deg, Vmax 700, C 14: 210.2 deg/s; A 2 deg, Vmax 500: 66.6 deg/s.
TEST(DataQuality, MainSequenceCheckValues) {
  EXPECT_NEAR(main_sequence_peak_velocity(5, 700, 14), 210.2, 0.05);
  EXPECT_NEAR(main_sequence_peak_velocity(2, 500, 14), 66.6, 0.05);
  EXPECT_NEAR(main_sequence_peak_velocity(20, 700, 14), 532.2, 0.05);
  EXPECT_EQ(main_sequence_peak_velocity(0, 700, 14), 0.0);
}

// Common practice, no source: bins from the trial's start, the mean of the valid samples in each.
TEST(DataQuality, BinMeansByHand) {
  const std::vector<Microseconds> t = {0, 4000, 8000, 12000, 16000, 20000, 24000};
  const std::vector<float> v = {1, 3, 10, 20, 99, 7, 9};
  const std::vector<std::uint8_t> ok = {1, 1, 1, 1, 0, 1, 1};
  const auto b = bin_means(t, v, ok, 4000, 24000, 8000);  // bins [4,12) [12,20) [20,24)
  ASSERT_EQ(b.size(), 3u);
  EXPECT_DOUBLE_EQ(b[0], 6.5);
  EXPECT_DOUBLE_EQ(b[1], 20.0);  // the invalid 99 left out
  EXPECT_DOUBLE_EQ(b[2], 7.0);
  const auto empty = bin_means(t, v, ok, 30000, 40000, 5000);
  ASSERT_EQ(empty.size(), 2u);
  EXPECT_TRUE(std::isnan(empty[0]));
  // A bin with no sample between two with some; a time that steps back into
  // an earlier bin joins that bin; one that steps back before the start has none.
  const std::vector<Microseconds> jumpy = {0, 1000, 2500, 1500, -7000, 9000, 9500};
  const std::vector<float> w = {5, 2, 4, 6, 100, 8, 10};
  const std::vector<std::uint8_t> all(jumpy.size(), 1);
  const auto j = bin_means(jumpy, w, all, 1000, 10000, 2000);  // bins [1,3) [3,5) [5,7) [7,9) [9,10)
  ASSERT_EQ(j.size(), 5u);
  EXPECT_DOUBLE_EQ(j[0], 4.0);  // 2, 4 and 6 (stepped back from 2500 to 1500)
  EXPECT_TRUE(std::isnan(j[1]));
  EXPECT_TRUE(std::isnan(j[2]));
  EXPECT_TRUE(std::isnan(j[3]));
  EXPECT_DOUBLE_EQ(j[4], 9.0);  // 8 and 10; the -7000 sample is in no bin
}

}  // namespace
}  // namespace gazemill
