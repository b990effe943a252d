#pragma once
// fixations.tsv, saccades.tsv and blinks.tsv: one row per event with its
// trial's identity and variables (participant, session, trial, item, the
// design's factors, the other variables by name), times from the trial's
// start (ms) and on the recording's clock (us), NA where undefined.

#include <set>
#include <string>
#include <vector>

#include "pipeline/event_table.h"
#include "pipeline/protocol.h"

namespace gazemill {

/// The trial columns every event table starts with: participant, session,
/// trial, the item, the design's factors, then every other trial variable of
/// the study by name. Made from the study's variable names before any row,
/// so that the tables can be written a recording at a time.
class EventTableColumns {
 public:
  EventTableColumns(const std::set<std::string>& variable_names, const DesignSpec& design);
  const std::string& header() const { return header_; }  // without a line end
  std::string row(const EventTrial& trial) const;         // the trial's fields, without a line end

 private:
  std::vector<std::string> variables_;
  std::string header_;
};

std::string fixations_header(const EventTableColumns& columns);  // with its line end
std::string saccades_header(const EventTableColumns& columns);
std::string blinks_header(const EventTableColumns& columns);

/// One line per event of `tables` (a recording's, say), appended to `out`.
void append_fixation_rows(const EventTables& tables, const EventTableColumns& columns, std::string& out);
void append_saccade_rows(const EventTables& tables, const EventTableColumns& columns, std::string& out);
void append_blink_rows(const EventTables& tables, const EventTableColumns& columns, std::string& out);

}  // namespace gazemill
