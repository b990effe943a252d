#include "app/commands.h"

#include <spdlog/spdlog.h>

#include <chrono>
#include <filesystem>
#include <iostream>

#include "app/ingest.h"
#include "app/inspect.h"
#include "app/protocol_parser.h"
#include "app/run_stats.h"

namespace gazemill {
namespace fs = std::filesystem;

void register_commands(CLI::App& app, CommandOptions& o) {
  auto* ingest = app.add_subcommand("ingest", "Read the raw exports a protocol names into a new HDF5 study store");
  ingest->add_option("protocol", o.protocol_path, "Protocol file (TOML)")->required()->check(CLI::ExistingFile);
  ingest->add_option("-o,--output", o.store_path, "Store to write (default: <protocol folder>/<study name or 'study'>.gzm.h5)");
  ingest->add_option("--deflate-level", o.deflate_level, "zlib level for sample chunks, 1 (fast) to 9 (small)")
      ->check(CLI::Range(1, 9));
  ingest->add_option("--threads", o.compression_threads, "Compression threads (default: one per core)");

  auto* inspect = app.add_subcommand("inspect", "Show the recordings, trials and data loss in a study store");
  inspect->add_option("store", o.inspect_store, "Study store (.gzm.h5)")->required();
}

int run_selected_command(const CLI::App& app, const CommandOptions& o) {
  if (app.got_subcommand("ingest")) {
    const RunClock clock;
    const Protocol protocol = parse_protocol_file(o.protocol_path);
    std::string store = o.store_path;
    if (store.empty()) {
      const std::string name = protocol.study_name.empty() ? "study" : protocol.study_name;
      store = (fs::path(o.protocol_path).parent_path() / (name + ".gzm.h5")).string();
    }
    StoreWriteOptions wopt;
    wopt.deflate_level = o.deflate_level;
    wopt.compression_threads = o.compression_threads;
    ProgressBar bar(o.show_progress);
    const IngestReport r = ingest_study(protocol, store, wopt, [&](const std::string& f, std::uint64_t d, std::uint64_t t) {
      bar.update(f, d, t);
    });
    bar.finish();
    spdlog::info("wrote {}: {} recordings, {} trials, {} samples, {} messages, {} repairs", store, r.recordings, r.trials,
                 r.samples, r.messages, r.repairs);
    spdlog::info("ingest: {}", clock.summary(r.input_bytes));
    return 0;
  }
  if (app.got_subcommand("inspect")) {
    print_store_overview(o.inspect_store, std::cout);
    return 0;
  }
  return 2;
}

}  // namespace gazemill
