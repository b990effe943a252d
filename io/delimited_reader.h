#pragma once
// Streaming reader for delimited sample exports (TSV/CSV, plain or gzip).
// Parses with fast_float over large buffered blocks, validates every row,
// and pushes samples to a SampleSink in fixed-size chunks.

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "pipeline/protocol.h"
#include "pipeline/recording.h"
#include "pipeline/sample_sink.h"
#include "pipeline/trial_segmenter.h"

namespace gazemill {

/// What one pass over a file found, besides the samples sent to the sink.
struct DelimitedReadResult {
  std::uint64_t samples = 0;
  std::uint64_t rows = 0;             // data rows, samples and message rows
  std::uint64_t missing_left = 0;     // samples whose left gaze is missing
  std::uint64_t missing_right = 0;
  Microseconds first_time_us = 0;
  Microseconds last_time_us = 0;
  double median_interval_us = 0.0;    // of consecutive sample timestamps
  bool has_left = false;
  bool has_right = false;
  std::vector<Message> messages;      // in file order
  std::vector<std::size_t> message_lines;
  RepairCounts repairs;
  std::uint64_t grouped_rows = 0;     // rows read eight at a time (io/row_group_reader.h)
};

struct DelimitedReadOptions {
  TableLayout layout;
  // When empty, the first non-comment line is the header. Otherwise the file
  // has no header and these are its column names (BIDS physio files).
  std::vector<std::string> column_names;
  DuplicateTimestampPolicy duplicate_timestamps = DuplicateTimestampPolicy::error;
  std::size_t chunk_rows = 1 << 16;
  // A row with a message and no gaze is a message row, not a sample, unless
  // this is set (labelled files, where such rows are blinks or losses).
  bool gazeless_message_rows_are_samples = false;
  // Protocol key prefix used in "column not found" errors, e.g. "input.table".
  std::string layout_key = "input.table";
  // Read runs of common rows (numbers or missing tokens, no message) on a
  // quicker path that hands anything else to the careful one. Off only in the
  // test that checks both paths give the same result.
  bool common_row_path = true;
  // On that path, read eight rows at a time with AVX-512 where the processor
  // has it. Off only in tests that compare with and without.
  bool row_groups = true;
  // Parse plain files from mapped windows rather than read() copies. Off only
  // in the test that checks both ways give the same result.
  bool map_plain_files = true;
  // Bytes mapped at a time (rounded up to whole pages); small only in tests,
  // to cross many window edges.
  std::size_t mapped_window_bytes = std::size_t{4} << 20;
  std::function<void(std::uint64_t done_bytes, std::uint64_t total_bytes)> progress;
};

/// Reads `path` according to `options`. Throws InputError naming the file,
/// line and column on any malformed row: a non-numeric field, a wrong field
/// count, a missing required column, decreasing or (unless repaired)
/// duplicate timestamps, or an empty file.
DelimitedReadResult read_delimited(const std::string& path, const DelimitedReadOptions& options,
                                   SampleSink& sink);

/// Reads only the header of `path` and checks that every column the layout
/// names is in it, so that a missing one is found before any work. Throws
/// the InputError read_delimited would throw for the header; other problems
/// are left for read_delimited.
void check_delimited_header(const std::string& path, const DelimitedReadOptions& options);

}  // namespace gazemill
