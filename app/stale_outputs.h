#pragma once
// Tables and a report made from results the store no longer holds as
// current (a stage command ran again since) must not stay where a lab's
// script reads them: they are renamed so that reading them fails loudly.

#include <string>
#include <vector>

namespace gazemill {

/// After a command changed the store at `store_path`: each tables folder at
/// its default places (STORE_FOLDER/tables, the run's, and <store name>-tables,
/// a stage command's), other than `just_written`, whose manifest names this
/// store and a stage result it no longer holds as current, is renamed to
/// "<folder>.stale" (replacing an older one); with the run's tables, its
/// report.html and run-summary.json become report.stale.html and
/// run-summary.stale.json. Returns what was set aside.
std::vector<std::string> set_aside_stale_outputs(const std::string& store_path, const std::string& just_written);

/// After a run wrote fresh tables and a report beside the store: the stale
/// ones set aside earlier are removed.
void remove_stale_outputs(const std::string& run_folder);

}  // namespace gazemill
