#pragma once
// Time representation shared by every stage: integer microseconds.
// Integers keep timestamps exact across unit conversions and make derived
// datasets byte-identical between runs.

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace gazemill {

using Microseconds = std::int64_t;

/// Unit in which a source file writes its timestamps.
enum class TimeUnit { seconds, milliseconds, microseconds, nanoseconds };

// The one place the units' sizes are written. The delimited reader scales
// whole numbers with them exactly (integer arithmetic, unit by unit), and
// everything else through microseconds_per.
constexpr std::int64_t kMicrosecondsPerSecond = 1000000;
constexpr std::int64_t kMicrosecondsPerMillisecond = 1000;
constexpr std::int64_t kNanosecondsPerMicrosecond = 1000;

/// Microseconds per one source unit (seconds -> 1e6, nanoseconds -> 1e-3).
double microseconds_per(TimeUnit unit);

/// Parses "s", "ms", "us" or "ns"; std::nullopt for anything else.
std::optional<TimeUnit> parse_time_unit(std::string_view text);

std::string to_string(TimeUnit unit);

}  // namespace gazemill
