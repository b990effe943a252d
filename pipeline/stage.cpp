#include "pipeline/stage.h"

namespace gazemill {

const char* to_string(Stage stage) {
  switch (stage) {
    case Stage::ingest: return "ingest";
    case Stage::detect: return "detect";
    case Stage::clean: return "clean";
    case Stage::align: return "align";
    case Stage::measure: return "measure";
  }
  return "?";
}

std::optional<Stage> stage_named(const std::string& name) {
  for (Stage s : kStages) {
    if (name == to_string(s)) return s;
  }
  return std::nullopt;
}

std::optional<Stage> upstream_of(Stage stage) {
  if (stage == Stage::ingest) return std::nullopt;
  return static_cast<Stage>(static_cast<int>(stage) - 1);
}

const char* to_string(StageState state) {
  switch (state) {
    case StageState::current: return "current";
    case StageState::stale: return "stale";
    case StageState::absent: return "absent";
  }
  return "?";
}

}  // namespace gazemill
