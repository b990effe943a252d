// gazemill: the command-line program. Parses arguments, sets up logging and
// calls the library; every error is caught here once and turned into an exit
// code: 0 ok, 1 bad input, 2 usage.

#include <CLI/CLI.hpp>
#include <malloc.h>
#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>

#include <algorithm>
#include <cstdio>
#include <cstdlib>
#include <iostream>

#include "app/warning_log.h"
#include "app/commands.h"
#include "gazemill/version.h"
#include "io/hdf5_util.h"
#include "pipeline/edit_distance.h"
#include "pipeline/input_error.h"

namespace {

// The first word that is no option: the command the user meant to give.
std::string first_word(int argc, char** argv) {
  for (int i = 1; i < argc; ++i) {
    if (argv[i][0] != '-') return argv[i];
  }
  return "";
}

}  // namespace

int main(int argc, char** argv) {
  using namespace gazemill;
  // Recordings pass through buffers of a few to tens of MB. By default glibc
  // maps each such buffer afresh and returns it on free, so every trial and
  // recording paid for its pages again (8 % of a study run's CPU time went
  // to page faults); these keep up to 128 MB of freed memory for the next.
  // Settings of the user's own (GLIBC_TUNABLES) win.
  if (!std::getenv("GLIBC_TUNABLES")) {
    mallopt(M_MMAP_THRESHOLD, 64 << 20);
    mallopt(M_TRIM_THRESHOLD, 128 << 20);
  }
  h5::library_start();
  CLI::App app{"gazemill: from raw eye-tracking sample exports to reading-time measures"};
  app.set_version_flag("--version", std::string("gazemill ") + kVersion);
  app.require_subcommand(1);
  // -v and -q may also come after the command (gazemill run study.toml -q).
  app.fallthrough();
  bool verbose = false, quiet = false;
  app.add_flag("-v,--verbose", verbose, "Log more detail to stderr");
  app.add_flag("-q,--quiet", quiet, "Log only errors");

  CommandOptions opts;
  register_commands(app, opts);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    if (e.get_exit_code() == 0) return app.exit(e);  // --help, --version
    const std::string word = first_word(argc, argv);
    const auto commands = app.get_subcommands([](const CLI::App*) { return true; });
    const bool known = std::any_of(commands.begin(), commands.end(), [&](const CLI::App* c) { return c->get_name() == word; });
    if (!word.empty() && !known) {
      std::vector<std::string> names;
      for (const auto* c : commands) names.push_back(c->get_name());
      const std::string nearest = gazemill::likely_meant(word, names);
      std::cerr << "error: there is no command '" << word << "'"
                << (nearest.empty() ? "" : "; did you mean '" + nearest + "'?") << " (gazemill --help lists the commands)\n";
      return 2;
    }
    std::cerr << "error: " << e.what() << (word.empty() ? " (gazemill --help lists the commands)\n"
                                                        : " (gazemill " + word + " --help lists its options)\n");
    return 2;
  }

  auto logger = spdlog::stderr_color_mt("gazemill");
  logger->set_pattern("%^%l%$: %v");
  spdlog::set_default_logger(logger);
  // Warnings reach the stages' records whatever the terminal shows (app/warning_log.h).
  set_terminal_level(quiet ? spdlog::level::err : verbose ? spdlog::level::debug : spdlog::level::info);
  opts.show_progress = !quiet && stderr_is_terminal();

  int code = 1;
  try {
    code = run_selected_command(app, opts);
  } catch (const InputError& e) {
    spdlog::error("{}", e.what());
  } catch (const std::exception& e) {
    spdlog::error("{}", e.what());
  } catch (...) {
    // A damaged store reaches here as an HDF5 exception from whatever read
    // met the damage: name the file, say what probably happened.
    const std::string reason = h5::last_error_reason();
    const std::string file = h5::last_file();
    if (file.empty()) {
      spdlog::error("an HDF5 operation failed{}", reason.empty() ? "" : ": " + reason);
    } else if (h5::last_file_purpose() == "reading") {
      spdlog::error("{}: the store could not be read{}; it is damaged or cut short (an interrupted copy?). Copy it again, or make it "
                    "again with gazemill run", file, reason.empty() ? "" : " (HDF5: " + reason + ")");
    } else {
      spdlog::error("{}: an HDF5 operation failed while writing it{}", file, reason.empty() ? "" : ": " + reason);
    }
  }
  if (code == 0) {
    h5::library_finish();
    return 0;
  }
  // After a failed write HDF5 still holds the file it could not flush, and its
  // clean-up at exit would try again and crash. Every temporary file is gone
  // by now (removed as the error unwound), so leave without that clean-up.
  spdlog::default_logger()->flush();
  std::fflush(stdout);
  std::fflush(stderr);
  std::_Exit(code);
}
