// gazemill: the command-line program. Parses arguments, sets up logging and
// calls the library; every error is caught here once and turned into an exit
// code: 0 ok, 1 bad input, 2 usage.

#include <CLI/CLI.hpp>
#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>

#include <chrono>
#include <filesystem>
#include <iostream>

#include "app/commands.h"
#include "gazemill/version.h"
#include "pipeline/input_error.h"

int main(int argc, char** argv) {
  using namespace gazemill;
  CLI::App app{"gazemill: from raw eye-tracking sample exports to reading-time measures"};
  app.set_version_flag("--version", std::string("gazemill ") + kVersion);
  app.require_subcommand(1);
  bool verbose = false, quiet = false;
  app.add_flag("-v,--verbose", verbose, "Log more detail to stderr");
  app.add_flag("-q,--quiet", quiet, "Log only errors");

  CommandOptions opts;
  register_commands(app, opts);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    return app.exit(e) == 0 ? 0 : 2;
  }

  auto logger = spdlog::stderr_color_mt("gazemill");
  logger->set_pattern("%^%l%$: %v");
  spdlog::set_default_logger(logger);
  spdlog::set_level(quiet ? spdlog::level::err : verbose ? spdlog::level::debug : spdlog::level::info);
  opts.show_progress = !quiet && stderr_is_terminal();

  try {
    return run_selected_command(app, opts);
  } catch (const InputError& e) {
    spdlog::error("{}", e.what());
    return 1;
  } catch (const std::exception& e) {
    spdlog::error("{}", e.what());
    return 1;
  }
}
