#pragma once
// The subcommands of the gazemill program and their options.

#include <CLI/CLI.hpp>
#include <string>

#include "app/progress_bar.h"

namespace gazemill {

struct CommandOptions {
  bool show_progress = false;
  // ingest
  std::string protocol_path;
  std::string store_path;
  int deflate_level = 1;
  unsigned compression_threads = 0;
  // inspect
  std::string inspect_store;
};

void register_commands(CLI::App& app, CommandOptions& opts);
/// Runs the parsed subcommand; returns the exit code. Throws InputError on bad input.
int run_selected_command(const CLI::App& app, const CommandOptions& opts);

}  // namespace gazemill
