#pragma once
// The report command: one self-contained HTML page to judge a study at a
// glance (run and provenance, signal quality, cleaning, detection, line
// assignment, measures, and a trial viewer), written from its store.

#include <CLI/CLI.hpp>
#include <map>
#include <string>
#include <vector>

#include "io/report_store.h"
#include "pipeline/cleaning_state.h"
#include "pipeline/line_assignment.h"

namespace gazemill {

struct ReportOptions {
  std::string store_path;
  std::string output;  // -o; default: <store name without .gzm.h5>-report.html beside the store
  std::size_t max_points_per_trial = 400;
};

/// Adds `gazemill report STORE [-o report.html]`, its options stored in `options`.
void register_report_command(CLI::App& app, ReportOptions& options);
/// Runs it; returns the exit code. Throws InputError on a bad store.
int run_report(const ReportOptions& options);

/// What a run lends the report instead of its reading the store back (each
/// may be null; see ReportDataOptions): the store's own events and measures.
struct LentToReport {
  const std::vector<RecordingEvents>* events = nullptr;
  const StoredTable* measures_wide = nullptr;
  const StoredTable* measures_by_role = nullptr;
  const std::vector<RecordingAlignment>* alignment = nullptr;
  const std::vector<CleanedRecording>* cleaned = nullptr;
  const std::map<std::string, RecordingCleaningRows>* cleaning_rows = nullptr;
  const AuditReport* audit = nullptr;
};

/// The report of the store at `store_path`, written to `html_path` (through a
/// temporary file renamed into place), for `gazemill run` to write beside its store.
void write_study_report(const std::string& store_path, const std::string& html_path, const LentToReport& lent = {});

/// Where `report` writes by default: beside the store, "<name>-report.html".
std::string default_report_path(const std::string& store_path);

}  // namespace gazemill
