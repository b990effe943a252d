#include "app/design_level_check.h"

#include <spdlog/spdlog.h>

#include <algorithm>
#include <map>
#include <string>

#include "pipeline/input_error.h"
#include "pipeline/rare_values.h"

namespace gazemill {

void check_design_levels(const Protocol& protocol, const std::vector<RecordingEvents>& recordings) {
  const DesignSpec& design = protocol.design;
  for (const auto& factor : design.factors) {
    const auto listed = design.levels.find(factor);
    std::map<std::string, std::size_t> trials;  // per value found
    std::size_t unlisted = 0;
    std::string first;
    for (const auto& r : recordings) {
      for (const auto& t : r.meta.trials) {
        const auto v = t.variables.find(factor);
        if (v == t.variables.end() || v->second.empty()) continue;  // a trial outside the design (a passage, a filler)
        ++trials[v->second];
        if (listed != design.levels.end() && std::find(listed->second.begin(), listed->second.end(), v->second) == listed->second.end()) {
          if (unlisted++ == 0) first = "trial " + t.id + " of recording " + r.meta.id + " has " + factor + " = '" + v->second + "'";
        }
      }
    }
    if (listed != design.levels.end()) {
      if (unlisted == 0) continue;
      std::string levels;
      for (const auto& l : listed->second) levels += (levels.empty() ? "" : ", ") + l;
      const auto line = design.levels_lines.count(factor) ? design.levels_lines.at(factor) : 0;
      throw InputError({protocol.path, line, "design.levels." + factor},
                       first + ", not one of its levels (" + levels + "); " + std::to_string(unlisted) + " trial(s) in all have a value not listed");
    }
    for (const auto& value : rare_values(trials)) {
      spdlog::warn("{}: the level '{}' of {} is in only {} trial(s) ({}); a typo? List the levels in [design.levels] to make one an error",
                   protocol.path, value, factor, trials.at(value), count_listing(trials));
    }
  }
}

}  // namespace gazemill
