#pragma once
// The subcommands of the gazemill program and their options.

#include <CLI/CLI.hpp>
#include <cstdint>
#include <string>
#include <vector>

#include "app/progress_bar.h"
#include "app/report_command.h"
#include "app/score.h"
#include "app/simulate_command.h"

namespace gazemill {

struct CommandOptions {
  bool show_progress = false;
  // run and the stage commands
  std::string protocol_path;
  std::string store_path;          // -s/--store (ingest: -o/--output)
  std::string output;              // -o/--output: run's folder, the tables folder of clean and measure
  unsigned jobs = 0;
  int deflate_level = 1;
  std::string shard;               // run --shard K/N
  std::vector<std::string> shards; // merge
  bool no_report = false;          // run, merge: --no-report
  // inspect, audit, verify
  std::string store_argument;
  std::string audit_by;
  // export --bids
  std::string bids_folder;
  std::string bids_task;
  // simulate
  SimulateOptions simulate;
  // score
  ScoreOptions score;
  // report
  ReportOptions report;
};

void register_commands(CLI::App& app, CommandOptions& opts);
/// Runs the parsed subcommand; returns the exit code. Throws InputError on bad input.
int run_selected_command(const CLI::App& app, const CommandOptions& opts);

}  // namespace gazemill
