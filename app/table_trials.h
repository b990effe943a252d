#pragma once
// Trials from a table instead of message patterns: the rows of the BIDS task
// *_events.tsv ([trials] from = "events") or of a lab's own trial table
// beside each recording (from = "table"). Each row is a trial; every other
// column is a trial variable ("n/a" = absent); markers still come from the
// messages inside each trial.

#include <set>
#include <string>
#include <vector>

#include "app/study_inputs.h"
#include "pipeline/protocol.h"
#include "pipeline/recording.h"

namespace gazemill {

/// The recording's samples span, which the trials must meet.
struct SampleSpan {
  Microseconds first_us = 0;
  Microseconds last_us = 0;
};

/// The trials of one recording from its table. `messages` in time order
/// (for markers). `source_file` is set to the table read. Throws InputError
/// naming file, line and column: a row without a usable start or duration,
/// a repeated trial id, a trial outside the samples, a column the protocol
/// needs (design factors, the item when regions are given, cleaning
/// variables, [trials] columns) missing from the header, or no trial at all.
std::vector<Trial> trials_from_table(const RecordingInputs& inputs, const Protocol& protocol, const SampleSpan& samples,
                                     const std::vector<Message>& messages, std::string& source_file);

/// Reads the header of the recording's trial table (the task events or the
/// lab's own) and checks every column the protocol names or relies on, so
/// that a missing one is found before any work. Throws InputError naming
/// the file, its header line and the column.
void check_trial_table(const RecordingInputs& inputs, const Protocol& protocol);

/// The trial variables the rest of the protocol relies on: [design]
/// factors, the item when [regions] are given, and the variables cleaning
/// rules name. Checked against each table's columns at ingest.
std::set<std::string> trial_variables_needed(const Protocol& protocol);

}  // namespace gazemill
