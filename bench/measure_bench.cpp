// Measure speed: a 40-participant x 120-trial study, 8 regions a trial and
// about 30 fixations, mapped to regions and measured. Prints the figure
// measured in this run.

#include <chrono>
#include <cstdio>
#include <random>

#include "measures/measure_aggregates.h"
#include "measures/reading_measures.h"
#include "measures/region_mapper.h"

using namespace gazemill;

int main() {
  TextLayoutSpec spec;
  spec.char_width_px = 12;
  spec.wrap_width_chars = 60;
  const RegionLayout layout = region_layout_from_text(
      lay_out_item("1", "The harbour master / announced that the / boat / would leave / the quay / before noon / on Friday / at last.", spec),
      spec, {});
  RegionSpec rs;
  rs.layout = spec;
  std::mt19937 rng(6);
  std::uniform_real_distribution<double> ms(80, 500), jitter(-15, 15), u(0, 1);
  // The fixations of every trial, generated once: positions along the text with regressions.
  std::vector<std::vector<std::pair<double, double>>> trials(40 * 120);
  for (auto& t : trials) {
    double x = 110;
    for (int k = 0; k < 30; ++k) {
      x = u(rng) < 0.12 ? std::max(100.0, x - 60) : x + 35;
      if (x > 100 + 60 * 12) break;
      t.emplace_back(x + jitter(rng), 220 + jitter(rng));
    }
  }
  double best = 1e300;
  std::size_t rows = 0;
  for (int r = 0; r < 3; ++r) {
    const auto t0 = std::chrono::steady_clock::now();
    std::vector<MeasureRow> out;
    for (const auto& t : trials) {
      std::vector<PlacedFixation> placed;
      for (const auto& [x, y] : t) {
        const FixationPlace p = place_fixation(layout, x, y, rs);
        placed.push_back({ms(rng), x, y, 0, 0, p.line, p.region, p.landing_chars});
      }
      for (const auto& m : reading_measures(placed, static_cast<int>(layout.regions.size()), spec.char_width_px)) {
        MeasureRow row;
        row.region = m.region + 1;
        row.item = "1";
        row.cell = "c";
        row.gaze_duration_ms = m.gaze_duration_ms;
        row.first_fixation_ms = m.first_fixation_ms;
        row.skipped = m.skipped;
        out.push_back(row);
      }
    }
    const auto agg = aggregate_by_item_region(out);
    rows = out.size();
    if (agg.rows.empty()) return 1;
    best = std::min(best, std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
  }
  std::printf("measures for 40 participants x 120 trials (%zu trial x region rows, mapping + measures + aggregates): %.3f s (best of 3)\n",
              rows, best);
  return 0;
}
