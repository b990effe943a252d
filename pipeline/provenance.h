#pragma once
// Where a store's contents came from: tool version, exact protocol text, and
// every input file with its size and SHA-256, so a run can be checked later.

#include <cstdint>
#include <map>
#include <string>
#include <vector>

namespace gazemill {

struct InputFileRecord {
  std::string path;
  std::uint64_t size_bytes = 0;
  std::string sha256;
  std::string recording_id;
  // Nanoseconds since the epoch when last changed: a later run trusts the
  // recorded SHA-256 of a file whose path, size and time are all unchanged.
  std::int64_t modified_ns = 0;
};

struct RepairRecord {
  std::string recording_id;
  std::string kind;  // e.g. duplicate_timestamp_dropped
  std::uint64_t count = 0;
};

struct Provenance {
  std::string tool_version;
  std::string protocol_path;
  std::string protocol_text;
  std::string protocol_sha256;
  std::string created_utc;  // ISO 8601
  std::string shard;        // "K/N" for a shard of a study run on many machines; "" for a whole study
  std::vector<std::string> study_recordings;  // a shard's: every recording of the whole study as it saw the inputs
  std::vector<InputFileRecord> inputs;
  std::vector<RepairRecord> repairs;
};

/// Summary figures of a recording's samples, kept beside them in the store.
struct SampleSummary {
  std::uint64_t sample_count = 0;
  std::uint64_t missing_left = 0;
  std::uint64_t missing_right = 0;
  std::int64_t first_time_us = 0;
  std::int64_t last_time_us = 0;
};

}  // namespace gazemill
