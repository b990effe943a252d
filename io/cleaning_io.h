#pragma once
// Cleaning results and the audit ledger in files: the HDF5 store, tidy TSV and
// JSON. Counting lives in pipeline/audit; this file only turns it into rows.
//
// Store layout added by clean:
//   /recordings/<id>/clean/fixations/{input_id,trial,start_us,end_us,duration_ms,x_px,y_px,x_deg,y_deg,merged_count}
//   /recordings/<id>/clean/removed_fixations/{input_id,trial,start_us,end_us,duration_ms,rule,reason,merged_into}
//                                            (merged_into = -1 when deleted rather than merged)
//   /recordings/<id>/clean/trials/{trial,kept,rule,reason}   (rule "" for kept trials)
//   /audit/rules/{order,name,kind,level}
//   /audit                                   attrs factors (JSON list: the design's factors)
//   /audit/counts/{rule,level,participant,removed_sequential,removed_alone,merged_sequential,merged_alone}
//   /audit/counts/cell/<factor>              the design cell's level of each row
//   /audit/totals/{participant,level,input,kept}, /audit/totals/cell/<factor>
//   /audit/overlap/{level,rule_a,rule_b,both}
// Whole-participant rows (participant-level counts and totals) have "" for every factor; so do
// trials that lack a factor's variable, which the tables write as NA.

#include <map>
#include <optional>
#include <string>
#include <vector>

#include "io/atomic_file.h"
#include "io/report_store.h"
#include "io/study_store.h"
#include "pipeline/cleaning_state.h"

namespace gazemill {

/// One tidy row of the audit: a rule at one level for one participant and
/// design cell (cell "" at the participant level). Merged fixations count as removed at the fixation level;
/// `merged_*` says how many of them were merges.
struct AuditRow {
  std::size_t order = 0;
  std::string rule, kind;
  AuditLevel level = AuditLevel::fixation;
  std::string participant, cell;
  std::uint64_t removed_sequential = 0, removed_alone = 0;
  std::uint64_t merged_sequential = 0, merged_alone = 0;
};

/// Every rule x level x participant x cell, zero rows included.
std::vector<AuditRow> audit_rows(const AuditReport& report);

/// The outcome's cleaning, recording by recording; `rows` are its removed
/// fixations and trial verdicts as cleaning_rows(outcome) gives them (made
/// once by the caller, who lends them on to the tables and the report).
void write_cleaning(StudyStoreWriter& store, const CleaningOutcome& outcome, const std::map<std::string, RecordingCleaningRows>& rows);
void write_audit(StudyStoreWriter& store, const AuditReport& report);
AuditReport read_audit(const StudyStoreReader& store);
/// Kept fixations of a recording after cleaning (duration_ms as the merge rules combined it).
std::vector<CleanFixation> read_clean_fixations(const StudyStoreReader& store, const std::string& recording);
/// A fixation cleaning removed: by which rule and why, and the input id of the
/// fixation it was merged into (none when deleted).
struct RemovedFixation {
  std::uint32_t input_id = 0;
  std::string rule, reason;
  std::optional<std::uint32_t> merged_into;
};
std::vector<RemovedFixation> read_removed_fixations(const StudyStoreReader& store, const std::string& recording);
/// The same for every recording, from the outcome write_cleaning stores (what
/// a run lends its tables instead of their reading it back).
std::map<std::string, std::vector<RemovedFixation>> removed_fixations(const CleaningOutcome& outcome);
/// Whether each trial of a recording was kept by cleaning, by trial id.
std::map<std::string, bool> read_clean_trial_verdicts(const StudyStoreReader& store, const std::string& recording);

/// audit.tsv (the rows), audit_totals.tsv and audit.json as text.
std::string audit_tsv(const AuditReport& report);
std::string audit_totals_tsv(const AuditReport& report);
std::string audit_json(const AuditReport& report);


}  // namespace gazemill
