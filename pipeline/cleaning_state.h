#pragma once
// What the cleaning rules work on: every participant's trials with their
// fixations, blinks and sample counts, each item keeping the id it had on
// input so that removals can be attributed and compared between rules.

#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "pipeline/audit.h"
#include "pipeline/events.h"
#include "pipeline/recording.h"

namespace gazemill {

struct CleanFixation {
  std::uint32_t id = 0;           // index among all input fixations of the study
  FixationEvent fixation;
  double duration_ms = 0;         // the event's duration; after a merge, as the merge rule combines them
  bool kept = true;
  std::uint32_t merged_count = 1; // input fixations it now stands for
  std::uint32_t merged_into = 0;  // when merged away: the id of the one it joined
  bool merged_away = false;
  int region = -1;                // 0-based region it lies on (when the protocol has regions), -1 off the regions
};

struct CleanTrial {
  std::uint32_t id = 0;           // index among all input trials of the study
  std::string recording;
  std::string participant;
  std::string trial;
  std::string item;
  std::string cell;  // its design cell (cell_key of the design's levels)
  std::map<std::string, std::string> variables;
  std::map<std::string, Microseconds> markers;
  Microseconds start_us = 0, end_us = 0;
  std::uint64_t samples = 0;         // samples inside the trial
  std::uint64_t missing_samples = 0; // of those, samples with no valid gaze in any recorded eye
  std::vector<BlinkEvent> blinks;
  std::vector<std::pair<Microseconds, Microseconds>> losses;  // stretches of track loss
  std::vector<CleanFixation> fixations;  // time order
  bool kept = true;
  bool regions_mapped = false;           // fixation.region is set (the protocol has regions)
  std::map<std::string, int> region_roles;  // role -> 0-based region, from the region files
  int region_count = 0;                      // regions of the trial's item (when mapped)
};

struct CleanParticipant {
  std::uint32_t id = 0;
  std::string participant;
  std::vector<CleanTrial> trials;
  bool kept = true;
};

struct CleaningState {
  std::vector<CleanParticipant> participants;
  std::vector<std::string> factors;  // the design's factors, naming the levels in each trial's cell
  ScreenGeometry screen;  // of the first recording; rules in degrees need it
};

/// One recording's trials and detected events, as cleaning takes them.
struct RecordingEvents {
  Recording meta;  // metadata, messages and trials; no samples
  DetectedEvents events;
};

/// One recording after cleaning, as the later stages take it: its kept
/// fixations in time order and whether each trial was kept.
struct CleanedRecording {
  Recording meta;
  std::vector<CleanFixation> kept;
  std::map<std::string, bool> trial_kept;  // by trial id
};

/// The result of cleaning: the state after every rule (removed items stay,
/// marked kept = false), the audit, and for every removed input fixation and
/// trial the rule (index) that removed it and why.
struct CleaningOutcome {
  CleaningState state;
  AuditReport report;
  std::map<std::uint32_t, std::pair<std::size_t, std::string>> fixation_removals;
  std::map<std::uint32_t, std::pair<std::size_t, std::string>> trial_removals;
};

}  // namespace gazemill
