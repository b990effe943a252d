#include "filters/rule_params.h"

#include <algorithm>
#include <cmath>
#include <vector>

#include "pipeline/edit_distance.h"

namespace gazemill {

std::optional<double> RuleParams::maybe(const std::string& key, double min, double max) {
  known_.insert(key);
  if (spec_.texts.count(key)) throw RuleParameterError(key, rule() + ": parameter " + key + " must be a number");
  auto it = spec_.numbers.find(key);
  if (it == spec_.numbers.end()) return std::nullopt;
  const double v = it->second;
  if (!std::isfinite(v) || v < min || v > max) {
    std::string range = "at least " + std::to_string(min);
    if (max < 1e300) range += " and at most " + std::to_string(max);
    throw RuleParameterError(key, rule() + ": parameter " + key + " must be " + range + ", found " + std::to_string(v));
  }
  return v;
}

double RuleParams::required(const std::string& key, double min, double max) {
  auto v = maybe(key, min, max);
  if (!v) {
    // "min_duration = 80" for "min_duration_ms": say that the unit is missing.
    for (const auto& [given, value] : spec_.numbers) {
      if (key.rfind(given + "_", 0) == 0) {
        throw RuleParameterError(given, rule() + ": parameter " + given + " needs its unit in the name, e.g. " + key);
      }
    }
    missing(key);
  }
  return *v;
}

double RuleParams::optional(const std::string& key, double fallback, double min, double max) {
  return maybe(key, min, max).value_or(fallback);
}

std::string RuleParams::choice(const std::string& key, const std::vector<std::string>& allowed, const std::string& fallback) {
  known_.insert(key);
  if (spec_.numbers.count(key)) throw RuleParameterError(key, rule() + ": parameter " + key + " must be text");
  auto it = spec_.texts.find(key);
  if (it == spec_.texts.end()) return fallback;
  if (allowed.empty()) return it->second;  // free text
  for (const auto& a : allowed) {
    if (a == it->second) return a;
  }
  std::string list;
  for (const auto& a : allowed) list += (list.empty() ? "\"" : ", \"") + a + "\"";
  throw RuleParameterError(key, rule() + ": parameter " + key + " must be one of " + list + ", found \"" + it->second + "\"");
}

std::string RuleParams::required_text(const std::string& key) {
  known_.insert(key);
  auto it = spec_.texts.find(key);
  if (it == spec_.texts.end()) missing(key, " (text)");
  return it->second;
}

void RuleParams::missing(const std::string& key, const std::string& what) const {
  // A misspelt name is the likelier story than a forgotten one: say which was given.
  auto near = [&](const std::string& given) { return !known_.count(given) && edit_distance(given, key) <= 3; };
  for (const auto& [given, value] : spec_.numbers) {
    if (near(given)) throw RuleParameterError(given, rule() + ": unknown parameter " + given + "; did you mean " + key + "?");
  }
  for (const auto& [given, value] : spec_.texts) {
    if (near(given)) throw RuleParameterError(given, rule() + ": unknown parameter " + given + "; did you mean " + key + "?");
  }
  throw RuleParameterError("", rule() + ": required parameter " + key + what + " is missing");
}

void RuleParams::finish() const {
  auto check = [&](const std::string& key) {
    if (known_.count(key)) return;
    for (const auto& k : known_) {
      if (k.rfind(key + "_", 0) == 0) {
        throw RuleParameterError(key, rule() + ": parameter " + key + " needs its unit in the name, e.g. " + k);
      }
    }
    std::string list;
    for (const auto& k : known_) list += (list.empty() ? "" : ", ") + k;
    throw RuleParameterError(key, rule() + ": unknown parameter " + key + "; this kind takes: " + list);
  };
  for (const auto& [k, v] : spec_.numbers) check(k);
  for (const auto& [k, v] : spec_.texts) check(k);
}

}  // namespace gazemill
