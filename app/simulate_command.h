#pragma once
// The simulate command: its options and its runner.

#include <CLI/CLI.hpp>
#include <cstdint>
#include <string>

namespace gazemill {

/// The options of `gazemill simulate`.
struct SimulateOptions {
  std::string folder;
  int participants = 4;
  int items = 12;
  double rate_hz = 1000;
  std::uint64_t seed = 1;
  double noise_deg = 0.03;
  bool binocular = false;
  bool no_pso = false;
  bool no_bids = false;
  int gzip_level = 1;
  double drift_offset_sd_px = 6.0;
  double drift_slope_sd = 0.01;
  double drift_growth_px = 0.25;
};

/// Adds the simulate subcommand, its options stored in `options`.
void register_simulate_command(CLI::App& app, SimulateOptions& options);
/// Runs it; returns the exit code.
int run_simulate(const SimulateOptions& options);

}  // namespace gazemill
