#pragma once
// Assembles the study report's content (pipeline/report_model.h) from a
// study store: provenance and stage states, data quality from the samples,
// the cleaning audit, detection and drift-correction summaries, the
// measures, and every trial for the trial viewer. Whatever a stage has not
// made yet is left out and named in ReportRun::notes.

#include <cstddef>
#include <map>
#include <string>
#include <vector>

#include "io/report_store.h"
#include "pipeline/line_assignment.h"
#include "pipeline/cleaning_state.h"
#include "pipeline/report_model.h"
#include "pipeline/sample_digest.h"

namespace gazemill {

struct ReportDataOptions {
  /// The viewer's time course: at most this many points per trial (bins of
  /// at least one sample interval, widened to a whole millisecond).
  std::size_t max_points_per_trial = kTimeCoursePoints;
  /// Recordings worked on at once (0: one per core).
  std::size_t threads = 0;
  /// Each recording's viewer trials packed for the page as soon as they are
  /// made (ViewerRecording::packed), so that memory holds them compressed;
  /// false keeps them whole, to look at.
  bool pack_viewer = false;
  /// Every recording's metadata and events as a run holds them (the store's
  /// own), so that they need not be read back; null: read from the store.
  const std::vector<RecordingEvents>* events = nullptr;
  /// The measures as the store holds them under /measures/wide and
  /// /measures/by_role, lent by a run that made them; null: read from the store.
  const StoredTable* measures_wide = nullptr;
  const StoredTable* measures_by_role = nullptr;
  /// Likewise the line assignments, the kept fixations and trial verdicts,
  /// the removed fixations with their rules, and the audit, as a run that
  /// made or read them holds them (the store's own); null: read from the store.
  const std::vector<RecordingAlignment>* alignment = nullptr;
  const std::vector<CleanedRecording>* cleaned = nullptr;
  const std::map<std::string, RecordingCleaningRows>* cleaning_rows = nullptr;
  const AuditReport* audit = nullptr;
  /// A participant stands apart in detection when a figure's |robust z| is
  /// above outlier_z and the figure is also more than outlier_relative (a
  /// fraction) from the participants' median (our rule, no source).
  double outlier_z = 3.0;
  double outlier_relative = 0.10;
  /// Saccades shorter than this are left out of the velocity ratio to the
  /// main sequence (the ratio is unstable for the smallest movements).
  double min_ratio_amplitude_deg = 0.5;
};

ReportModel assemble_report(const std::string& store_path, const ReportDataOptions& options = {});

}  // namespace gazemill
