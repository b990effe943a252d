#pragma once
// The simulate command: its options and its runner.

#include <CLI/CLI.hpp>
#include <cstdint>
#include <string>

namespace gazemill {

/// The options of `gazemill simulate`. Defaults are the demo's.
struct SimulateOptions {
  std::string folder;
  int participants = 4;
  int items = 24;
  int passages = 4;
  double rate_hz = 1000;
  std::uint64_t seed = 1;
  double noise_deg = 0.03;
  bool binocular = false;
  bool no_pso = false;
  bool no_bids = false;
  int gzip_level = 1;
  double question_share = 1.0 / 3.0;
  double line_height_px = 40;
  int wrap_chars = 80;
  double drift_offset_sd_px = 6.0;
  double drift_slope_sd = 0.01;
  double drift_growth_px = 0.1;
  double passage_noise_lines = 0.2;
  double passage_slope = 0.02;
  double passage_shift = 0.04;
  double passage_offset_lines = 0.4;
  double passage_within = 0.15;
  double passage_between = 0.05;
  unsigned threads = 0;
};

/// Adds the simulate subcommand, its options stored in `options`.
void register_simulate_command(CLI::App& app, SimulateOptions& options);
/// Runs it; returns the exit code.
int run_simulate(const SimulateOptions& options);

}  // namespace gazemill
