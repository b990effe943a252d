#pragma once
// A simple generative model of a skilled reader's scanpath over one item:
// word-based saccade targeting with length-dependent skipping, refixations of
// long words, within-line regressions, return sweeps, and ex-Gaussian fixation
// durations, with the design's effects on the target region and the region
// after it (sim/study_design.h, TargetEffect).
// Its summary figures are checked against published reading facts in tests
// (Rayner 1998); it is a yardstick for the pipeline, not a theory of reading.

#include <random>
#include <vector>

#include "pipeline/text_layout.h"
#include "sim/study_design.h"

namespace gazemill::sim {

struct ReaderParams {
  // Ex-Gaussian fixation durations (ms): mean = mu + tau.
  double duration_mu_ms = 175.0;
  double duration_sigma_ms = 35.0;
  double duration_tau_ms = 60.0;
  double min_duration_ms = 50.0;
  // Skipping: p = clamp(intercept - slope * letters, floor, ceiling).
  double skip_intercept = 0.95;
  double skip_slope_per_letter = 0.15;
  double skip_floor = 0.02;
  double skip_ceiling = 0.75;
  // Refixation: p = clamp(slope * (letters - 4), 0, 0.5), plus the design's effect on the target.
  double refixation_slope_per_letter = 0.06;
  // Probability that a saccade goes back to an earlier word of the line.
  double regression_probability = 0.11;
  // Landing: preferred position as a share of word length, and its SD (characters).
  double landing_share = 0.4;
  double landing_sd_chars = 1.2;
};

struct ScanpathFixation {
  int char_index = 0;   // landing character in the laid-out item
  double duration_ms = 0;
};

/// `effect` is what the trial's design cell does to the target region
/// `target_region` (0-based; -1: no target, and `effect` is ignored).
std::vector<ScanpathFixation> generate_scanpath(const LaidOutItem& item, int target_region, const TargetEffect& effect,
                                                const ReaderParams& params, std::mt19937_64& rng);

}  // namespace gazemill::sim
