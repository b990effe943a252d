#pragma once
// The event lists as tables: one row per detected fixation (with what
// cleaning, drift correction and region mapping made of it), saccade and
// blink, each with its trial's variables.

#include <map>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/events.h"

namespace gazemill {

/// The trial an event row belongs to.
struct EventTrial {
  std::string participant, session, recording, trial;
  Microseconds start_us = 0;                     // the trial's start: event times are also given from it
  std::map<std::string, std::string> variables;  // every trial variable
};

struct FixationRow {
  const EventTrial* trial = nullptr;
  std::size_t number = 0;     // 1-based, in time order among the trial's detected fixations
  FixationEvent event;        // as detected
  double duration_ms = 0;     // as cleaning left it (a merge sums durations); as detected when removed
  double x_px = 0, y_px = 0;  // as cleaning left it (a merge may move it); as detected when removed
  bool kept = true;
  std::string removed_by;     // the rule's name, when removed
  std::string removal_reason;
  std::optional<std::size_t> merged_into;  // the number of the fixation it joined
  std::optional<int> line;                 // 1-based, from drift correction
  std::optional<double> corrected_y_px;
  std::optional<int> region;               // 1-based
  std::string region_label, region_role;
  std::optional<double> line_chars;        // characters from the line's left edge
  std::optional<double> landing_chars;     // characters from the region's first letter
};

struct SaccadeRow {
  const EventTrial* trial = nullptr;
  std::size_t number = 0;
  SaccadeEvent event;
};

struct BlinkRow {
  const EventTrial* trial = nullptr;
  std::size_t number = 0;
  BlinkEvent event;
};

/// A study's event tables; the rows point into `trials`.
struct EventTables {
  std::vector<std::unique_ptr<EventTrial>> trials;
  std::vector<FixationRow> fixations;
  std::vector<SaccadeRow> saccades;
  std::vector<BlinkRow> blinks;
};

}  // namespace gazemill
