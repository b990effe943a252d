#pragma once
// The stages of a study and what each result records of its making, so that
// a result made from something that has since changed is never used unseen.
//
// Every result in the store carries a key: a SHA-256 over what it was made
// from (its upstream results' keys and its own protocol section, resolved).
// A stage is current when its recorded upstream keys are the keys those
// results have now; re-running a stage makes everything downstream stale.

#include <map>
#include <optional>
#include <string>
#include <vector>

namespace gazemill {

/// In pipeline order.
enum class Stage { ingest, detect, clean, align, measure };
inline constexpr Stage kStages[] = {Stage::ingest, Stage::detect, Stage::clean, Stage::align, Stage::measure};

const char* to_string(Stage stage);
std::optional<Stage> stage_named(const std::string& name);
/// The stage before `stage` (none for ingest).
std::optional<Stage> upstream_of(Stage stage);

enum class StageState { current, stale, absent };
const char* to_string(StageState state);

/// What the store records of one study-level stage result.
struct StageRecord {
  Stage stage = Stage::ingest;
  std::string key;                          // hex SHA-256 of what it was made from
  std::string upstream_key;                 // the key of the upstream result it was made from ("" for ingest)
  std::string settings_json;                // its protocol section, resolved (defaults filled in)
  std::string created_utc;
  std::string tool_version;
  std::string protocol_text;                // the whole protocol it ran with (verify re-runs it)
  std::string protocol_path;                // absolute; relative file names resolve from its folder
  StageState state = StageState::current;   // stale: an upstream stage ran again after it
  std::string stale_reason;                 // e.g. "detect ran again on 2026-12-04T10:00:00Z"
  std::vector<std::string> warnings;        // what it warned of when it ran: true of its results as long as they stand
};

}  // namespace gazemill
