#include "filters/merge_short_fixations.h"

#include <cmath>

namespace gazemill {

double MergeShortFixations::distance(const CleanFixation& a, const CleanFixation& b) const {
  const FixationEvent &x = a.fixation, &y = b.fixation;
  if (p_.max_distance_px > 0) return std::hypot(x.x_px - y.x_px, x.y_px - y.y_px);
  if (p_.max_distance_chars > 0) return std::abs(x.x_px - y.x_px) / p_.char_width_px;  // along the line
  return std::hypot(x.x_deg - y.x_deg, x.y_deg - y.y_deg);
}

double MergeShortFixations::limit() const {
  if (p_.max_distance_px > 0) return p_.max_distance_px;
  if (p_.max_distance_chars > 0) return p_.max_distance_chars;
  return p_.max_distance_deg;
}

void MergeShortFixations::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for (auto& participant : state.participants) {
    for (auto& trial : participant.trials) {
      if (!trial.kept) continue;
      auto& fx = trial.fixations;
      for (std::size_t i = 0; i < fx.size(); ++i) {
        CleanFixation& s = fx[i];
        if (!s.kept || s.duration_ms >= p_.max_duration_ms) continue;
        // The nearest kept fixation on each side.
        auto neighbour = [&](int step) -> CleanFixation* {
          for (std::ptrdiff_t k = static_cast<std::ptrdiff_t>(i) + step; k >= 0 && k < static_cast<std::ptrdiff_t>(fx.size()); k += step) {
            if (fx[static_cast<std::size_t>(k)].kept) return &fx[static_cast<std::size_t>(k)];
          }
          return nullptr;
        };
        auto usable = [&](CleanFixation* c) {
          if (!c || c->duration_ms <= s.duration_ms || distance(s, *c) > limit()) return false;
          const Microseconds gap = c->fixation.start_us > s.fixation.start_us ? c->fixation.start_us - s.fixation.end_us
                                                                               : s.fixation.start_us - c->fixation.end_us;
          return static_cast<double>(gap) / 1000.0 <= p_.max_gap_ms;
        };
        CleanFixation* prev = neighbour(-1);
        CleanFixation* next = neighbour(+1);
        if (!usable(prev)) prev = nullptr;
        if (!usable(next)) next = nullptr;
        CleanFixation* target = prev ? prev : next;
        if (prev && next) {
          if (p_.prefer == "next") target = next;
          else if (p_.prefer == "longer") target = next->duration_ms > prev->duration_ms ? next : prev;
          else if (p_.prefer == "nearer") target = distance(s, *next) < distance(s, *prev) ? next : prev;
        }
        if (!target) continue;

        FixationEvent& t = target->fixation;
        const FixationEvent& f = s.fixation;
        if (p_.position == "weighted") {
          const double wt = target->duration_ms, ws = s.duration_ms, w = wt + ws;
          t.x_px = (t.x_px * wt + f.x_px * ws) / w;
          t.y_px = (t.y_px * wt + f.y_px * ws) / w;
          t.x_deg = (t.x_deg * wt + f.x_deg * ws) / w;
          t.y_deg = (t.y_deg * wt + f.y_deg * ws) / w;
          t.x_median_px = t.x_px;
          t.y_median_px = t.y_px;
        }
        t.start_us = std::min(t.start_us, f.start_us);
        t.end_us = std::max(t.end_us, f.end_us);
        target->duration_ms = p_.duration == "span" ? static_cast<double>(t.end_us - t.start_us) / 1000.0
                                                    : target->duration_ms + s.duration_ms;
        target->merged_count += s.merged_count;
        remove_fixation(trial, s, rule, "merged into a longer neighbour", channel, target);
      }
    }
  }
}

}  // namespace gazemill
