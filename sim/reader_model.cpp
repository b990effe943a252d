#include "sim/reader_model.h"

#include <algorithm>
#include <cmath>

namespace gazemill::sim {
namespace {

double ex_gaussian(double mu, double sigma, double tau, std::mt19937_64& rng) {
  std::normal_distribution<double> normal(mu, sigma);
  std::exponential_distribution<double> expo(1.0 / tau);
  return normal(rng) + expo(rng);
}

}  // namespace

std::vector<ScanpathFixation> generate_scanpath(const LaidOutItem& item, int target_region, const TargetEffect& effect,
                                                const ReaderParams& p, std::mt19937_64& rng) {
  std::uniform_real_distribution<double> uniform(0.0, 1.0);
  std::normal_distribution<double> landing_noise(0.0, p.landing_sd_chars);
  const int n_words = static_cast<int>(item.words.size());
  std::vector<ScanpathFixation> path;
  if (n_words == 0) return path;

  bool target_fixated = false;
  auto duration_for = [&](int char_index) {
    const int region = item.chars[static_cast<std::size_t>(char_index)].region;
    double mu = p.duration_mu_ms;
    if (target_region >= 0) {
      if (region == target_region) {
        mu += effect.fixation_ms;
        // The preview's cost falls on the first fixation only.
        if (!target_fixated) mu += effect.first_fixation_ms;
        target_fixated = true;
      } else if (region == target_region + 1) {
        mu += effect.spillover_ms;
      }
    }
    return std::max(p.min_duration_ms, ex_gaussian(mu, p.duration_sigma_ms, p.duration_tau_ms, rng));
  };
  auto land_in = [&](int word) {
    const Word& w = item.words[static_cast<std::size_t>(word)];
    const double preferred = w.first_char + p.landing_share * (w.length() - 1);
    const int c = static_cast<int>(std::lround(preferred + landing_noise(rng)));
    return std::clamp(c, w.first_char, w.last_char);
  };
  auto skip_probability = [&](int word) {
    const Word& w = item.words[static_cast<std::size_t>(word)];
    const double base = std::clamp(p.skip_intercept - p.skip_slope_per_letter * w.length(), p.skip_floor, p.skip_ceiling);
    return target_region >= 0 && w.region == target_region ? base * effect.skip_factor : base;
  };

  int word = 0;
  int furthest = 0;
  int c = land_in(0);
  bool refixated = false;
  for (int guard = 0; guard < 20 * n_words + 20; ++guard) {
    path.push_back({c, duration_for(c)});
    const Word& w = item.words[static_cast<std::size_t>(word)];
    furthest = std::max(furthest, word);

    // Refixate long words once, further to the right of the first landing.
    double p_refix = std::clamp(p.refixation_slope_per_letter * (w.length() - 4), 0.0, 0.5);
    if (target_region >= 0 && w.region == target_region) p_refix += effect.refixation;
    if (!refixated && uniform(rng) < p_refix && c + 2 <= w.last_char) {
      // A refixation moves on to the word's second half (at least two letters on).
      refixated = true;
      const int target = w.first_char + static_cast<int>(std::lround(0.75 * (w.length() - 1)));
      c = std::min(w.last_char, std::max(c + 2, target));
      continue;
    }
    refixated = false;

    int next;
    const bool same_line_back = word > 0 && item.words[static_cast<std::size_t>(word - 1)].line == w.line;
    if (same_line_back && uniform(rng) < p.regression_probability) {
      next = word - 1;
      if (next > 0 && item.words[static_cast<std::size_t>(next - 1)].line == w.line && uniform(rng) < 0.3) --next;
    } else {
      next = std::max(word, furthest) + 1;
      // Skip at most one word, never the last one (the reader must reach the end).
      if (next < n_words - 1 && uniform(rng) < skip_probability(next)) ++next;
    }
    if (next >= n_words) break;
    word = next;
    c = land_in(word);
  }
  return path;
}

}  // namespace gazemill::sim
