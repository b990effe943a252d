#pragma once
// The subcommands of the gazemill program and their options.

#include <CLI/CLI.hpp>
#include <cstdint>
#include <string>
#include <vector>

#include "app/progress_bar.h"
#include "app/score.h"

namespace gazemill {

struct CommandOptions {
  bool show_progress = false;
  // run and the stage commands
  std::string protocol_path;
  std::string store_path;          // -s/--store (ingest: -o/--output)
  std::string output;              // -o/--output: run's folder, the tables folder of clean and measure
  unsigned jobs = 0;
  int deflate_level = 1;
  // inspect, audit, verify
  std::string store_argument;
  std::string audit_by;
  // simulate
  std::string sim_folder;
  int sim_participants = 4;
  int sim_items = 12;
  double sim_rate_hz = 1000;
  std::uint64_t sim_seed = 1;
  double sim_noise_deg = 0.03;
  bool sim_binocular = false;
  bool sim_no_pso = false;
  bool sim_no_bids = false;
  int sim_gzip_level = 1;
  double sim_drift_offset_sd_px = 6.0;
  double sim_drift_slope_sd = 0.01;
  double sim_drift_growth_px = 0.25;
  // score
  ScoreOptions score;
};

void register_commands(CLI::App& app, CommandOptions& opts);
/// Runs the parsed subcommand; returns the exit code. Throws InputError on bad input.
int run_selected_command(const CLI::App& app, const CommandOptions& opts);

}  // namespace gazemill
