#pragma once
// Which files make which recording: the protocol's globs resolved, each file
// identified (participant, session) by the file-name pattern, BIDS eyes
// grouped and message files found. Nothing is read but names and sidecars.

#include <optional>
#include <string>
#include <vector>

#include "io/bids_reader.h"
#include "pipeline/protocol.h"

namespace gazemill {

struct RecordingInputs {
  std::string id;  // participant, or participant_session
  std::string participant;
  std::string session;
  std::string sample_file;   // the file messages and errors are named by (BIDS: the first eye's physio file)
  std::string message_file;  // "" when the messages are rows of the sample file
  std::string trial_table_file;  // [trials] from = "table": the recording's trial table
  std::vector<std::string> files;  // every file the recording is read from, in a fixed order
  std::optional<BidsRecordingFiles> bids;
};

/// Input files named by the protocol's globs (relative to the protocol's
/// folder), sorted. Throws InputError when a pattern matches nothing.
std::vector<std::string> resolve_input_files(const Protocol& protocol);

/// Every recording of the study, sorted by id. Throws InputError naming the
/// file when a file is not identified by the pattern, two files give one
/// recording, or a message file is missing.
std::vector<RecordingInputs> find_recordings(const Protocol& protocol);

}  // namespace gazemill
