#include "filters/region_exclusions.h"

#include <optional>
#include <stdexcept>

namespace gazemill {
namespace {

// The kept fixations of a trial, in time order.
std::vector<const CleanFixation*> kept_fixations(const CleanTrial& t) {
  std::vector<const CleanFixation*> out;
  for (const auto& f : t.fixations) {
    if (f.kept) out.push_back(&f);
  }
  return out;
}

// First-pass entry of region r: index of the first first-pass fixation and one past the run.
std::optional<std::pair<std::size_t, std::size_t>> first_pass(const std::vector<const CleanFixation*>& fx, int r) {
  int furthest = -1;
  for (std::size_t k = 0; k < fx.size(); ++k) {
    if (fx[k]->region == r) {
      if (furthest > r) return std::nullopt;  // a region further on came first: skipped
      std::size_t end = k;
      while (end < fx.size() && fx[end]->region == r) ++end;
      return std::make_pair(k, end);
    }
    furthest = std::max(furthest, fx[k]->region);
  }
  return std::nullopt;
}

void require_regions(const CleanTrial& t) {
  if (!t.regions_mapped) {
    throw std::invalid_argument("region rules need the protocol's [regions] section (trial " + t.trial + " of " + t.participant + ")");
  }
}

}  // namespace

int NamedRegion::resolve(const CleanTrial& t) const {
  if (!role.empty()) {
    auto it = t.region_roles.find(role);
    return it == t.region_roles.end() ? -1 : it->second;
  }
  return t.region_count > 0 && index >= t.region_count ? -1 : index;  // an item of fewer regions has none of that number
}

std::string NamedRegion::describe() const { return role.empty() ? "region " + std::to_string(index + 1) : "the " + role + " region"; }

void ExcludeTrialsWithGapInFirstPass::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_trial(state, [&](CleanTrial& t) {
    require_regions(t);
    const int r = region_.resolve(t);
    const auto fx = kept_fixations(t);
    const auto fp = r < 0 ? std::nullopt : first_pass(fx, r);
    if (!fp) return;  // not read in first pass: nothing to check
    const Microseconds from = fx[fp->first]->fixation.start_us;
    const Microseconds to = fp->second < fx.size() ? fx[fp->second]->fixation.start_us : t.end_us;
    bool hit = false;
    if (events_ != "loss") {
      for (const auto& b : t.blinks) hit = hit || (b.start_us < to && b.end_us > from);
    }
    if (events_ != "blink") {
      for (const auto& [s, e] : t.losses) hit = hit || (s < to && e > from);
    }
    if (hit) {
      remove_trial(t, rule, (events_ == "any" ? std::string("blink or loss") : events_) + " during first-pass reading of " + region_.describe(),
                   channel);
    }
  });
}

void ExcludeTrialsSkippingRegion::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_trial(state, [&](CleanTrial& t) {
    require_regions(t);
    const int r = region_.resolve(t);
    if (r < 0) return;  // the item has no such region (a filler, a passage): there is nothing to skip
    if (!first_pass(kept_fixations(t), r)) remove_trial(t, rule, region_.describe() + " skipped in first pass", channel);
  });
}

void ExcludeTrialsWithoutFirstRegion::apply(CleaningState& state, std::size_t rule, AuditChannel& channel) const {
  for_each_kept_trial(state, [&](CleanTrial& t) {
    require_regions(t);
    for (const auto* f : kept_fixations(t)) {
      if (f->region == 0) return;
    }
    remove_trial(t, rule, "no fixation on the first region", channel);
  });
}

}  // namespace gazemill
