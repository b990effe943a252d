#pragma once
// The warnings a stage gives are facts about its results (a design level in
// one trial only, rules that keep few fixations): kept with the stage's
// record, said again whenever a run reuses the results, and shown in the
// report, so that they do not vanish on the second run. This catches what
// the program logs at warning level while a stage runs, whatever the
// terminal's verbosity.

#include <memory>
#include <utility>
#include <string>
#include <vector>

#include "pipeline/stage.h"

namespace gazemill {

class StudyStoreReader;
struct WarningCapture;

/// While it lives, every warning logged through the default logger is also
/// kept here: from any thread, or only from the thread that made it. The
/// first one (or set_terminal_level) adds a sink to the default logger: let
/// that happen before other threads log.
class CapturedWarnings {
 public:
  enum class From { any_thread, this_thread };
  explicit CapturedWarnings(From from = From::any_thread);
  ~CapturedWarnings();
  CapturedWarnings(const CapturedWarnings&) = delete;
  CapturedWarnings& operator=(const CapturedWarnings&) = delete;
  /// The warnings since the last call, in the order logged.
  std::vector<std::string> take();

 private:
  std::unique_ptr<WarningCapture> capture_;
};

/// The warnings kept with the current results of a store, stage by stage in
/// pipeline order: each current stage's own, and for ingest also each
/// recording's (what reading it warned of).
std::vector<std::pair<Stage, std::string>> kept_warnings(const StudyStoreReader& store);

/// Sets the default logger's level so that warnings always reach a
/// CapturedWarnings, while its terminal sinks keep `level`.
void set_terminal_level(int level);

}  // namespace gazemill
