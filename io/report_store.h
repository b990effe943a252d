#pragma once
// What the study report reads from the store beyond what the stages read
// back: removed fixations and trial verdicts with their rules, and whole
// stored tables (the measures) as columns. Reading only; the layout is the
// one documented in io/study_store.h, io/cleaning_io.h and io/measures_io.h.

#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "io/study_store.h"
#include "pipeline/cleaning_state.h"

namespace gazemill {

/// /recordings/<id>/clean/removed_fixations, one row per removed input fixation, every column
/// (read_removed_fixations in io/cleaning_io.h keeps only the id, rule, reason and merge).
struct RemovedFixationRow {
  std::uint32_t input_id = 0;
  std::string trial;
  Microseconds start_us = 0, end_us = 0;
  double duration_ms = 0;
  std::string rule, reason;
  std::int64_t merged_into = -1;  // the input id it joined; -1 when deleted
};
std::vector<RemovedFixationRow> read_removed_fixation_rows(const StudyStoreReader& store, const std::string& recording);

/// /recordings/<id>/clean/trials: each trial's verdict, with the rule and reason of an exclusion.
struct TrialVerdictRow {
  std::string trial;
  bool kept = true;
  std::string rule, reason;
};
std::vector<TrialVerdictRow> read_trial_verdicts(const StudyStoreReader& store, const std::string& recording);

/// A recording's removed fixations and trial verdicts as write_cleaning
/// stores them, in the same order.
struct RecordingCleaningRows {
  std::vector<RemovedFixationRow> removed;
  std::vector<TrialVerdictRow> verdicts;
};
/// Those rows of every recording, from the outcome itself: what write_cleaning
/// stores, and what a run lends its report instead of its reading them back.
std::map<std::string, RecordingCleaningRows> cleaning_rows(const CleaningOutcome& outcome);

/// A stored table (a group of equally long 1-D columns): numeric columns as
/// doubles (NaN stays NaN), string columns as text; factor levels kept under
/// cell/<factor> are read as columns named by the factor.
struct StoredTable {
  std::size_t rows = 0;
  std::map<std::string, std::vector<double>> numbers;
  std::map<std::string, std::vector<std::string>> texts;
  bool has(const std::string& column) const { return numbers.count(column) || texts.count(column); }
};
/// Throws InputError naming the store and the group when it is absent or its columns differ in length.
StoredTable read_stored_table(const StudyStoreReader& store, const std::string& group_path);

}  // namespace gazemill
