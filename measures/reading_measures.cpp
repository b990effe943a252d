#include "measures/reading_measures.h"

#include <cmath>

namespace gazemill {

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
    for (std::size_t k = 0; k < n; ++k) {
      if (fx[k].region != r) continue;
      total += fx[k].duration_ms;
      ++m.total_fixations;
      if (first == n) first = k;
      // Entered from a region further on: the previous fixation on a region is beyond this one.
      for (std::size_t j = k; j-- > 0;) {
        if (fx[j].region < 0) continue;
        if (fx[j].region > r) m.regression_in = true;
        break;
      }
    }
    m.fixated = m.total_fixations > 0;
    if (m.fixated) m.total_time_ms = total;
    if (first == n || furthest_before[first] > r) continue;  // skipped in first pass

    m.skipped = false;
    std::size_t end = first;
    double gaze = 0;
    while (end < n && fx[end].region == r) gaze += fx[end++].duration_ms;
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
    double second = 0;
    std::size_t k = end;
    while (k < n && fx[k].region != r) ++k;
    while (k < n && fx[k].region == r) second += fx[k++].duration_ms;
    m.second_pass_ms = second;

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
