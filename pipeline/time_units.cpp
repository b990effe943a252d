#include "pipeline/time_units.h"

namespace gazemill {

double microseconds_per(TimeUnit unit) {
  switch (unit) {
    case TimeUnit::seconds: return 1e6;
    case TimeUnit::milliseconds: return 1e3;
    case TimeUnit::microseconds: return 1.0;
    case TimeUnit::nanoseconds: return 1e-3;
  }
  return 1.0;
}

std::optional<TimeUnit> parse_time_unit(std::string_view text) {
  if (text == "s") return TimeUnit::seconds;
  if (text == "ms") return TimeUnit::milliseconds;
  if (text == "us") return TimeUnit::microseconds;
  if (text == "ns") return TimeUnit::nanoseconds;
  return std::nullopt;
}

std::string to_string(TimeUnit unit) {
  switch (unit) {
    case TimeUnit::seconds: return "s";
    case TimeUnit::milliseconds: return "ms";
    case TimeUnit::microseconds: return "us";
    case TimeUnit::nanoseconds: return "ns";
  }
  return "?";
}

}  // namespace gazemill
