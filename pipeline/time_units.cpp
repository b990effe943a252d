#include "pipeline/time_units.h"

namespace gazemill {

double microseconds_per(TimeUnit unit) {
  switch (unit) {
    case TimeUnit::seconds: return static_cast<double>(kMicrosecondsPerSecond);
    case TimeUnit::milliseconds: return static_cast<double>(kMicrosecondsPerMillisecond);
    case TimeUnit::microseconds: return 1.0;
    case TimeUnit::nanoseconds: return 1.0 / static_cast<double>(kNanosecondsPerMicrosecond);
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
