#pragma once
// Reads a rule's parameters strictly: every parameter named, typed and
// range-checked, units in the names, and unknown ones refused.

#include <optional>
#include <set>
#include <string>
#include <vector>

#include "filters/cleaning_rule.h"

namespace gazemill {

class RuleParams {
 public:
  explicit RuleParams(const CleaningRuleSpec& spec) : spec_(spec) {}
  double required(const std::string& key, double min = 0.0, double max = 1e300);
  double optional(const std::string& key, double fallback, double min = 0.0, double max = 1e300);
  std::optional<double> maybe(const std::string& key, double min = 0.0, double max = 1e300);
  /// A text parameter; one of `allowed` unless that list is empty.
  std::string choice(const std::string& key, const std::vector<std::string>& allowed, const std::string& fallback);
  std::string required_text(const std::string& key);
  /// Throws for any parameter not asked for; suggests the unit when only that is missing.
  void finish() const;

 private:
  [[noreturn]] void missing(const std::string& key, const std::string& what = "") const;
  std::string rule() const { return "rule '" + spec_.name + "' (" + spec_.kind + ")"; }
  const CleaningRuleSpec& spec_;
  std::set<std::string> known_;
};

}  // namespace gazemill
