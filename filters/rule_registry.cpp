// Creates cleaning rules by kind from the protocol: the one place that knows
// every kind, its parameters, their units and their ranges.

#include "filters/cleaning_rule.h"
#include "filters/fixation_filters.h"
#include "filters/merge_short_fixations.h"
#include "filters/participant_exclusions.h"
#include "filters/region_exclusions.h"
#include "filters/rule_params.h"
#include "filters/trial_exclusions.h"

namespace gazemill {
namespace {

constexpr double kNoLimit = 1e300;

const std::vector<std::pair<std::string, AuditLevel>>& kinds() {
  static const std::vector<std::pair<std::string, AuditLevel>> k = {
      {"merge_short_fixations", AuditLevel::fixation},
      {"delete_short_fixations", AuditLevel::fixation},
      {"delete_long_fixations", AuditLevel::fixation},
      {"delete_fixations_near_blinks", AuditLevel::fixation},
      {"delete_fixations_outside", AuditLevel::fixation},
      {"exclude_trials_with_data_loss", AuditLevel::trial},
      {"exclude_trials_with_few_fixations", AuditLevel::trial},
      {"exclude_trials_by_duration", AuditLevel::trial},
      {"exclude_trials_with_gap_in_window", AuditLevel::trial},
      {"exclude_trials_with_gap_in_first_pass", AuditLevel::trial},
      {"exclude_trials_skipping_region", AuditLevel::trial},
      {"exclude_trials_without_first_region", AuditLevel::trial},
      {"exclude_participants_by_trial_loss", AuditLevel::participant},
      {"exclude_participants_by_variable", AuditLevel::participant},
  };
  return k;
}

}  // namespace

AuditLevel cleaning_rule_level(const std::string& kind) {
  for (const auto& [k, level] : kinds()) {
    if (k == kind) return level;
  }
  std::string list;
  for (const auto& [k, level] : kinds()) list += (list.empty() ? "" : ", ") + k;
  throw RuleParameterError("kind", "unknown rule kind \"" + kind + "\"; the kinds are: " + list);
}

std::unique_ptr<CleaningRule> make_cleaning_rule(const CleaningRuleSpec& spec) {
  cleaning_rule_level(spec.kind);
  RuleParams p(spec);
  std::unique_ptr<CleaningRule> rule;
  const std::string& k = spec.kind;
  if (k == "merge_short_fixations") {
    MergeShortFixationsParams m;
    m.max_duration_ms = p.required("max_duration_ms", 0);
    const auto deg = p.maybe("max_distance_deg", 0), px = p.maybe("max_distance_px", 0), chars = p.maybe("max_distance_chars", 0);
    const int given = (deg ? 1 : 0) + (px ? 1 : 0) + (chars ? 1 : 0);
    if (given != 1) {
      throw RuleParameterError("", "rule '" + spec.name + "' (" + k + "): give exactly one of max_distance_deg, max_distance_px, max_distance_chars");
    }
    m.max_distance_deg = deg.value_or(0);
    m.max_distance_px = px.value_or(0);
    m.max_distance_chars = chars.value_or(0);
    m.char_width_px = p.optional("char_width_px", 0, 0);
    if (chars && m.char_width_px <= 0) {
      throw RuleParameterError("", "rule '" + spec.name + "' (" + k + "): max_distance_chars needs char_width_px (the font's character width)");
    }
    m.max_gap_ms = p.required("max_gap_ms", 0);  // every threshold is the lab's to write: no built-in value
    m.prefer = p.choice("prefer", {"nearer", "longer", "previous", "next"}, "nearer");
    m.duration = p.choice("duration", {"sum", "span"}, "sum");
    m.position = p.choice("position", {"longer", "weighted"}, "longer");
    rule = std::make_unique<MergeShortFixations>(m);
  } else if (k == "delete_short_fixations") {
    rule = std::make_unique<DeleteShortFixations>(p.required("min_duration_ms", 0));
  } else if (k == "delete_long_fixations") {
    rule = std::make_unique<DeleteLongFixations>(p.required("max_duration_ms", 0));
  } else if (k == "delete_fixations_near_blinks") {
    rule = std::make_unique<DeleteFixationsNearBlinks>(p.required("within_ms", 0));
  } else if (k == "delete_fixations_outside") {
    const std::string area = p.choice("area", {"screen", "box", "text"}, "screen");
    AreaBox box;
    if (area == "box") {
      box = {p.required("left_px", -kNoLimit), p.required("top_px", -kNoLimit), p.required("right_px", -kNoLimit),
             p.required("bottom_px", -kNoLimit)};
      if (box.right_px <= box.left_px || box.bottom_px <= box.top_px) {
        throw RuleParameterError("right_px", "rule '" + spec.name + "': the box must have right_px > left_px and bottom_px > top_px");
      }
    }
    using Area = DeleteFixationsOutside::Area;
    const Area which = area == "screen" ? Area::screen : area == "box" ? Area::box : Area::text;
    const double margin = which == Area::text ? 0.0 : p.optional("margin_px", 0, 0);  // text: the mapping's margins
    rule = std::make_unique<DeleteFixationsOutside>(which, box, margin);
  } else if (k == "exclude_trials_with_data_loss") {
    rule = std::make_unique<ExcludeTrialsWithDataLoss>(p.required("max_missing_percent", 0, 100));
  } else if (k == "exclude_trials_with_few_fixations") {
    rule = std::make_unique<ExcludeTrialsWithFewFixations>(p.required("min_fixations", 0));
  } else if (k == "exclude_trials_by_duration") {
    const double lo = p.optional("min_duration_ms", 0, 0), hi = p.optional("max_duration_ms", 0, 0);
    if (lo == 0 && hi == 0) throw RuleParameterError("", "rule '" + spec.name + "' (" + k + "): give min_duration_ms, max_duration_ms or both");
    if (lo > 0 && hi > 0 && hi <= lo) {
      throw RuleParameterError("max_duration_ms", "rule '" + spec.name + "' (" + k + "): max_duration_ms must be above min_duration_ms, or no trial could be kept");
    }
    rule = std::make_unique<ExcludeTrialsByDuration>(lo, hi);
  } else if (k == "exclude_trials_with_gap_in_window") {
    const std::string marker = p.required_text("marker");
    const double from = p.required("from_ms", -kNoLimit), to = p.required("to_ms", -kNoLimit);
    if (to <= from) throw RuleParameterError("to_ms", "rule '" + spec.name + "': to_ms must be after from_ms");
    rule = std::make_unique<ExcludeTrialsWithGapInWindow>(marker, from, to, p.choice("events", {"blink", "loss", "any"}, "any"));
  } else if (k == "exclude_trials_with_gap_in_first_pass" || k == "exclude_trials_skipping_region") {
    NamedRegion region;
    const auto number = p.maybe("region", 1);
    region.role = p.choice("role", {}, "");
    if (number.has_value() == !region.role.empty()) {
      throw RuleParameterError("", "rule '" + spec.name + "' (" + k + "): name the region either by number (region = 3) or by role (role = \"target\")");
    }
    if (number) region.index = static_cast<int>(*number) - 1;
    if (k == "exclude_trials_skipping_region") rule = std::make_unique<ExcludeTrialsSkippingRegion>(region);
    else rule = std::make_unique<ExcludeTrialsWithGapInFirstPass>(region, p.choice("events", {"blink", "loss", "any"}, "any"));
  } else if (k == "exclude_trials_without_first_region") {
    rule = std::make_unique<ExcludeTrialsWithoutFirstRegion>();
  } else if (k == "exclude_participants_by_trial_loss") {
    rule = std::make_unique<ExcludeParticipantsByTrialLoss>(p.required("max_excluded_percent", 0, 100));
  } else if (k == "exclude_participants_by_variable") {
    const std::string variable = p.required_text("variable");
    rule = std::make_unique<ExcludeParticipantsByVariable>(variable, p.required("min_mean", -kNoLimit));
  }
  p.finish();
  return rule;
}

}  // namespace gazemill
