#pragma once
// The stage commands as the tests call them: each a run of one stage of
// gazemill's study run (app/study_run.h), as `gazemill ingest` and the
// other stage commands are.

#include <string>
#include <vector>

#include "app/study_run.h"
#include "io/study_store.h"

namespace gazemill {

inline StudyRunReport run_stage(const Protocol& p, const std::string& store, Stage stage, const std::string& tables = "") {
  StudyRunOptions o;
  o.store_path = store;
  o.only = stage;
  o.tables_folder = tables;
  return run_study(p, o);
}

inline StudyRunReport ingest_study(const Protocol& p, const std::string& store) { return run_stage(p, store, Stage::ingest); }
inline StudyRunReport detect_study(const Protocol& p, const std::string& store) { return run_stage(p, store, Stage::detect); }
inline AuditReport clean_study(const Protocol& p, const std::string& store, const std::string& tables) {
  return *run_stage(p, store, Stage::clean, tables).audit;
}
/// Align, then measure.
inline std::vector<MeasureRow> measure_study(const Protocol& p, const std::string& store, const std::string& tables) {
  run_stage(p, store, Stage::align);
  return run_stage(p, store, Stage::measure, tables).rows;
}

}  // namespace gazemill
