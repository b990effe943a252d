#include "filters/fixation_filters.h"

#include <fmt/format.h>

#include <stdexcept>

namespace gazemill {
void DeleteShortFixations::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_fixation(state, [&](CleanTrial& t, CleanFixation& f) {
    if (f.duration_ms < min_ms_) remove_fixation(t, f, rule, fmt::format("{:.0f} ms < {:g} ms", f.duration_ms, min_ms_), channel);
  });
}

void DeleteLongFixations::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_fixation(state, [&](CleanTrial& t, CleanFixation& f) {
    if (f.duration_ms > max_ms_) remove_fixation(t, f, rule, fmt::format("{:.0f} ms > {:g} ms", f.duration_ms, max_ms_), channel);
  });
}

void DeleteFixationsNearBlinks::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  const auto within = static_cast<Microseconds>(within_ms_ * 1000.0);
  for_each_kept_fixation(state, [&](CleanTrial& t, CleanFixation& f) {
    for (const auto& b : t.blinks) {
      if (f.fixation.end_us > b.start_us - within && f.fixation.start_us < b.end_us + within) {
        remove_fixation(t, f, rule, fmt::format("within {:g} ms of a blink", within_ms_), channel);
        return;
      }
    }
  });
}

void DeleteFixationsOutside::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  AreaBox box = box_;
  if (area_ == Area::screen) box = {0, 0, static_cast<double>(state.screen.width_px), static_cast<double>(state.screen.height_px)};
  for_each_kept_fixation(state, [&](CleanTrial& t, CleanFixation& f) {
    if (area_ == Area::text) {
      if (!t.regions_mapped) throw std::invalid_argument("area = \"text\" needs the protocol's [regions] section");
      if (f.region < 0) remove_fixation(t, f, rule, "outside the text", channel);
      return;
    }
    const double x = f.fixation.x_px, y = f.fixation.y_px;
    if (x < box.left_px - margin_px_ || x > box.right_px + margin_px_ || y < box.top_px - margin_px_ || y > box.bottom_px + margin_px_) {
      remove_fixation(t, f, rule, area_ == Area::screen ? "outside the screen" : "outside the box", channel);
    }
  });
}

}  // namespace gazemill
