#include "app/commands.h"

#include <spdlog/spdlog.h>

#include <charconv>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <iostream>

#include "app/ingest.h"
#include "app/inspect.h"
#include "app/protocol_parser.h"
#include "app/run_stats.h"
#include "app/clean.h"
#include "app/audit_report.h"
#include "app/verify.h"
#include "app/measure.h"
#include "io/cleaning_io.h"
#include "io/study_store.h"
#include "app/detect.h"
#include "app/score.h"
#include "detectors/detector_registry.h"
#include "pipeline/input_error.h"
#include <fstream>
#include <optional>
#include <string_view>
#include "sim/study_export.h"
#include "sim/study_simulator.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

std::string default_store_path(const Protocol& protocol, const std::string& protocol_path) {
  const std::string name = protocol.study_name.empty() ? "study" : protocol.study_name;
  return (fs::path(protocol_path).parent_path() / (name + ".gzm.h5")).string();
}

}  // namespace

void register_commands(CLI::App& app, CommandOptions& o) {
  auto* ingest = app.add_subcommand("ingest", "Read the raw exports a protocol names into a new HDF5 study store");
  ingest->add_option("protocol", o.protocol_path, "Protocol file (TOML)")->required()->check(CLI::ExistingFile);
  ingest->add_option("-o,--output", o.store_path, "Store to write (default: <protocol folder>/<study name or 'study'>.gzm.h5)");
  ingest->add_option("--deflate-level", o.deflate_level, "Deflate level for sample chunks: 1 (fastest, by ISA-L) to 9 (smallest, by libdeflate)")
      ->check(CLI::Range(1, 9));
  ingest->add_option("--threads", o.compression_threads, "Compression threads (default: one per core)");

  auto* sim = app.add_subcommand("simulate", "Write a simulated reading study with its ground truth (invented data)");
  sim->add_option("-o,--output", o.sim_folder, "Folder to write the study into")->required();
  sim->add_option("--participants", o.sim_participants, "Number of simulated readers")->check(CLI::Range(1, 1000));
  sim->add_option("--items", o.sim_items, "Number of items (the 12 bundled texts are reused beyond 12)")->check(CLI::Range(2, 10000));
  sim->add_option("--rate", o.sim_rate_hz, "Sampling rate in Hz")->check(CLI::IsMember({250.0, 500.0, 1000.0, 2000.0}));
  sim->add_option("--seed", o.sim_seed, "Random seed; the same seed gives the same study");
  sim->add_option("--noise-deg", o.sim_noise_deg, "Precision as RMS sample-to-sample distance (deg)")->check(CLI::Range(0.0, 2.0));
  sim->add_flag("--binocular", o.sim_binocular, "Record both eyes");
  sim->add_flag("--no-pso", o.sim_no_pso, "No post-saccadic oscillation");
  sim->add_flag("--no-bids", o.sim_no_bids, "Skip the BIDS copy");
  sim->add_option("--gzip-level", o.sim_gzip_level, "zlib level of the written .gz files, 1 (fast) to 9 (small)")->check(CLI::Range(1, 9));
  sim->add_option("--drift-offset-px", o.sim_drift_offset_sd_px, "SD of the per-trial vertical offset (px)")->check(CLI::Range(0.0, 500.0));
  sim->add_option("--drift-slope", o.sim_drift_slope_sd, "SD of the vertical drift slope across the screen (px per px)")->check(CLI::Range(0.0, 1.0));
  sim->add_option("--drift-growth-px", o.sim_drift_growth_px, "Vertical drift added per trial over the session (px)")->check(CLI::Range(0.0, 50.0));

  auto* detect = app.add_subcommand("detect", "Detect fixations, saccades and blinks in every trial of a store");
  detect->add_option("protocol", o.detect_protocol, "Protocol file with a [detection] section (defaults apply without one)")
      ->required()->check(CLI::ExistingFile);
  detect->add_option("-s,--store", o.detect_store, "Study store (default: the one ingest writes for this protocol)");

  register_score_command(app, o.score);

  auto* clean = app.add_subcommand("clean", "Apply the protocol's [[cleaning]] rules to the detected events, with an audit");
  clean->add_option("protocol", o.clean_protocol, "Protocol file with [[cleaning]] rules")->required()->check(CLI::ExistingFile);
  clean->add_option("-s,--store", o.clean_store, "Study store (default: the one ingest writes for this protocol)");
  clean->add_option("--reports", o.clean_reports, "Folder for audit.tsv, audit_totals.tsv and audit.json (default: beside the store)");

  auto* measure = app.add_subcommand("measure", "Map fixations to regions and compute the reading-time measures");
  measure->add_option("protocol", o.measure_protocol, "Protocol file with a [regions] section")->required()->check(CLI::ExistingFile);
  measure->add_option("-s,--store", o.measure_store, "Study store (default: the one ingest writes for this protocol)");
  measure->add_option("--out", o.measure_out, "Folder for measures.tsv and the other tables (default: beside the store)");

  auto* audit = app.add_subcommand("audit", "Show what each cleaning rule removed, per condition");
  audit->add_option("store", o.audit_store, "Study store (.gzm.h5)")->required();
  audit->add_option("--by", o.audit_by, "Break the table down: participant")->check(CLI::IsMember({"participant"}));

  auto* verify = app.add_subcommand("verify", "Re-run the stored protocol on the recorded inputs and compare every derived dataset");
  verify->add_option("store", o.verify_store, "Study store (.gzm.h5)")->required();

  auto* inspect = app.add_subcommand("inspect", "Show the recordings, trials and data loss in a study store");
  inspect->add_option("store", o.inspect_store, "Study store (.gzm.h5)")->required();
}

int run_selected_command(const CLI::App& app, const CommandOptions& o) {
  if (app.got_subcommand("ingest")) {
    const RunClock clock;
    const Protocol protocol = parse_protocol_file(o.protocol_path);
    const std::string store = o.store_path.empty() ? default_store_path(protocol, o.protocol_path) : o.store_path;
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
  if (app.got_subcommand("simulate")) {
    const RunClock clock;
    sim::SimulationConfig cfg;
    cfg.design = sim::demo_design();
    cfg.design.participants = o.sim_participants;
    const auto bundled = cfg.design.items;
    cfg.design.items.clear();
    for (int i = 0; i < o.sim_items; ++i) {
      sim::ItemTemplate t = bundled[static_cast<std::size_t>(i) % bundled.size()];
      t.id = std::to_string(i + 1);
      cfg.design.items.push_back(t);
    }
    cfg.seed = o.sim_seed;
    cfg.signal.sample_rate_hz = o.sim_rate_hz;
    cfg.signal.noise_rms_s2s_deg = o.sim_noise_deg;
    cfg.signal.binocular = o.sim_binocular;
    cfg.signal.post_saccadic_oscillation = !o.sim_no_pso;
    cfg.signal.drift_offset_sd_px = o.sim_drift_offset_sd_px;
    cfg.signal.drift_slope_sd = o.sim_drift_slope_sd;
    cfg.signal.drift_growth_px_per_trial = o.sim_drift_growth_px;
    const sim::SimulatedStudy study = sim::simulate_study(cfg);
    sim::ExportOptions eopt;
    eopt.bids = !o.sim_no_bids;
    eopt.gzip_level = o.sim_gzip_level;
    const std::string protocol = sim::export_study(study, o.sim_folder, eopt);
    std::uint64_t samples = 0;
    for (const auto& r : study.recordings) samples += r.recording.samples.size();
    spdlog::info("simulated {} participants x {} items at {} Hz: {} samples", o.sim_participants, o.sim_items, o.sim_rate_hz, samples);
    spdlog::info("protocol: {}", protocol);
    spdlog::info("simulate: {}", clock.summary());
    return 0;
  }
  if (app.got_subcommand("detect")) {
    const RunClock clock;
    const Protocol protocol = parse_protocol_file(o.detect_protocol);
    const std::string store = o.detect_store.empty() ? default_store_path(protocol, o.detect_protocol) : o.detect_store;
    const DetectReport r = detect_study(protocol, store);
    spdlog::info("{} ({}): {} recordings, {} samples -> {} fixations, {} saccades, {} blinks", store, protocol.detection.method,
                 r.recordings, r.samples, r.fixations, r.saccades, r.blinks);
    spdlog::info("detect: {}", clock.summary());
    return 0;
  }
  if (app.got_subcommand("score")) return run_score(o.score);
  if (app.got_subcommand("clean")) {
    const RunClock clock;
    const Protocol protocol = parse_protocol_file(o.clean_protocol);
    const std::string store = o.clean_store.empty() ? default_store_path(protocol, o.clean_protocol) : o.clean_store;
    const std::string reports = o.clean_reports.empty() ? fs::path(store).parent_path().string() : o.clean_reports;
    const AuditReport report = clean_study(protocol, store, reports.empty() ? "." : reports);
    std::array<std::uint64_t, kAuditLevels> input{}, kept{};
    for (const auto& [g, t] : report.totals) {
      for (std::size_t l = 0; l < kAuditLevels; ++l) {
        input[l] += t.input[l];
        kept[l] += t.kept[l];
      }
    }
    spdlog::info("{}: kept {}/{} fixations, {}/{} trials, {}/{} participants; audit in {}", store, kept[1], input[1], kept[2], input[2],
                 kept[3], input[3], reports.empty() ? "." : reports);
    spdlog::info("clean: {}", clock.summary());
    return 0;
  }
  if (app.got_subcommand("measure")) {
    const RunClock clock;
    const Protocol protocol = parse_protocol_file(o.measure_protocol);
    const std::string store = o.measure_store.empty() ? default_store_path(protocol, o.measure_protocol) : o.measure_store;
    std::string out = o.measure_out.empty() ? fs::path(store).parent_path().string() : o.measure_out;
    if (out.empty()) out = ".";
    const auto rows = measure_study(protocol, store, out);
    spdlog::info("{}: {} participant x trial x region rows; measures.tsv and the other tables in {}", store, rows.size(), out);
    spdlog::info("measure: {}", clock.summary());
    return 0;
  }
  if (app.got_subcommand("audit")) {
    StudyStoreReader store(o.audit_store);
    print_audit(read_audit(store), o.audit_by == "participant", std::cout);
    return 0;
  }
  if (app.got_subcommand("verify")) {
    return verify_store(o.verify_store, std::cout) ? 0 : 1;
  }
  if (app.got_subcommand("inspect")) {
    print_store_overview(o.inspect_store, std::cout);
    return 0;
  }
  return 2;
}

}  // namespace gazemill
