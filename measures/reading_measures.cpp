#include "measures/reading_measures.h"

#include <cmath>

namespace gazemill {
namespace {

// The end (exclusive) of the run on `region` that starts at `k`.
std::size_t run_end(const std::vector<PlacedFixation>& fx, std::size_t k, int region) {
  while (k < fx.size() && fx[k].region == region) ++k;
  return k;
}

double run_duration(const std::vector<PlacedFixation>& fx, std::size_t from, std::size_t to) {
  double sum = 0;
  for (std::size_t k = from; k < to; ++k) sum += fx[k].duration_ms;
  return sum;
}

}  // namespace

std::vector<RegionMeasures> reading_measures(const std::vector<PlacedFixation>& fx, int region_count, double char_width_px) {
  std::vector<RegionMeasures> out(static_cast<std::size_t>(std::max(0, region_count)));
  const std::size_t n = fx.size();
  // The furthest region fixated before each fixation.
  std::vector<int> furthest_before(n, -1);
  for (std::size_t k = 1; k < n; ++k) furthest_before[k] = std::max(furthest_before[k - 1], fx[k - 1].region);

  for (int r = 0; r < region_count; ++r) {
    RegionMeasures& m = out[static_cast<std::size_t>(r)];
    m.region = r;
    double total = 0;
    std::size_t first = n;
    bool entered_from_further = false;
    for (std::size_t k = 0; k < n; ++k) {
      if (fx[k].region != r) continue;
      total += fx[k].duration_ms;
      ++m.total_fixations;
      if (first == n) first = k;
      // A run's first fixation: was the fixation on a region just before it further on?
      for (std::size_t j = k; j-- > 0;) {
        if (fx[j].region < 0) continue;
        if (fx[j].region > r) entered_from_further = true;
        break;
      }
    }
    m.fixated = m.total_fixations > 0;
    if (!m.fixated) continue;  // every duration and indicator stays missing; counts stay 0
    m.total_time_ms = total;
    m.regression_in = entered_from_further;

    if (furthest_before[first] > r) {  // skipped in first pass, read later
      const std::size_t end = run_end(fx, first, r);
      m.second_pass_ms = run_duration(fx, first, end);
      m.rereading_ms = total;
      continue;
    }

    m.skipped = false;
    const std::size_t end = run_end(fx, first, r);
    const double gaze = run_duration(fx, first, end);
    m.first_fixation_ms = fx[first].duration_ms;
    m.first_pass_fixations = static_cast<int>(end - first);
    if (end - first == 1) m.single_fixation_ms = fx[first].duration_ms;
    m.gaze_duration_ms = gaze;
    m.rereading_ms = total - gaze;

    // The first fixation on a region after the run decides the exit direction.
    m.regression_out = false;
    for (std::size_t k = end; k < n; ++k) {
      if (fx[k].region < 0) continue;
      m.regression_out = fx[k].region < r;
      break;
    }
    double go_past = 0, selective = 0;
    for (std::size_t k = first; k < n && fx[k].region <= r; ++k) {
      go_past += fx[k].duration_ms;
      if (fx[k].region == r) selective += fx[k].duration_ms;
    }
    m.go_past_ms = go_past;
    m.selective_go_past_ms = selective;

    // Second pass: the next run on the region after the first-pass run.
    std::size_t k = end;
    while (k < n && fx[k].region != r) ++k;
    m.second_pass_ms = run_duration(fx, k, run_end(fx, k, r));

    m.landing_chars = fx[first].landing_chars;
    if (first > 0) {
      const PlacedFixation& a = fx[first - 1];
      const PlacedFixation& b = fx[first];
      m.incoming_saccade_deg = std::hypot(b.x_deg - a.x_deg, b.y_deg - a.y_deg);
      if (char_width_px > 0 && a.line == b.line && a.line >= 0) m.incoming_saccade_chars = (b.x_px - a.x_px) / char_width_px;
    }
  }
  return out;
}

}  // namespace gazemill
