#pragma once
// ingest: protocol + raw exports -> a new HDF5 study store.

#include <cstdint>
#include <functional>
#include <string>

#include "io/study_store.h"
#include "pipeline/protocol.h"

namespace gazemill {

struct IngestReport {
  std::size_t recordings = 0;
  std::uint64_t samples = 0;
  std::uint64_t messages = 0;
  std::size_t trials = 0;
  std::uint64_t input_bytes = 0;
  std::uint64_t repairs = 0;
};

/// Called as bytes of an input file are read: file, bytes done, file size.
using IngestProgress = std::function<void(const std::string& file, std::uint64_t done, std::uint64_t total)>;

/// Input files named by the protocol's globs (relative to the protocol's
/// folder), sorted. Throws InputError when a pattern matches nothing.
std::vector<std::string> resolve_input_files(const Protocol& protocol);

/// Reads every input and writes the store at `store_path` (temporary file,
/// renamed on success). Throws InputError on bad input; nothing is left behind.
IngestReport ingest_study(const Protocol& protocol, const std::string& store_path, const StoreWriteOptions& options,
                          const IngestProgress& progress = {});

std::string utc_now_iso8601();

}  // namespace gazemill
