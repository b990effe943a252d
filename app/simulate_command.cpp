#include "app/simulate_command.h"

#include <spdlog/spdlog.h>

#include "app/run_stats.h"
#include "sim/study_export.h"
#include "sim/study_simulator.h"

namespace gazemill {

void register_simulate_command(CLI::App& app, SimulateOptions& o) {
  auto* sim = app.add_subcommand("simulate", "Write a simulated reading study with its ground truth (invented data)");
  sim->add_option("-o,--output", o.folder, "Folder to write the study into")->required();
  sim->add_option("--participants", o.participants, "Number of simulated readers")->check(CLI::Range(1, 1000))->capture_default_str();
  sim->add_option("--items", o.items, "Number of items (the 12 bundled texts are reused beyond 12)")->check(CLI::Range(2, 10000))->capture_default_str();
  sim->add_option("--rate", o.rate_hz, "Sampling rate in Hz")->check(CLI::IsMember({250.0, 500.0, 1000.0, 2000.0}))->capture_default_str();
  sim->add_option("--seed", o.seed, "Random seed; the same seed gives the same study")->capture_default_str();
  sim->add_option("--noise-deg", o.noise_deg, "Precision as RMS sample-to-sample distance (deg)")->check(CLI::Range(0.0, 2.0))->capture_default_str();
  sim->add_flag("--binocular", o.binocular, "Record both eyes");
  sim->add_flag("--no-pso", o.no_pso, "No post-saccadic oscillation");
  sim->add_flag("--no-bids", o.no_bids, "Skip the BIDS copy");
  sim->add_option("--gzip-level", o.gzip_level, "zlib level of the written .gz files, 1 (fast) to 9 (small)")->check(CLI::Range(1, 9))->capture_default_str();
  sim->add_option("--drift-offset-px", o.drift_offset_sd_px, "SD of the per-trial vertical offset (px)")->check(CLI::Range(0.0, 500.0))->capture_default_str();
  sim->add_option("--drift-slope", o.drift_slope_sd, "SD of the vertical drift slope across the screen (px per px)")->check(CLI::Range(0.0, 1.0))->capture_default_str();
  sim->add_option("--drift-growth-px", o.drift_growth_px, "Vertical drift added per trial over the session (px)")->check(CLI::Range(0.0, 50.0))->capture_default_str();

}

int run_simulate(const SimulateOptions& o) {
    const RunClock clock;
    sim::SimulationConfig cfg;
    cfg.design = sim::demo_design();
    cfg.design.participants = o.participants;
    const auto bundled = cfg.design.items;
    cfg.design.items.clear();
    for (int i = 0; i < o.items; ++i) {
      sim::ItemTemplate t = bundled[static_cast<std::size_t>(i) % bundled.size()];
      t.id = std::to_string(i + 1);
      cfg.design.items.push_back(t);
    }
    cfg.seed = o.seed;
    cfg.signal.sample_rate_hz = o.rate_hz;
    cfg.signal.noise_rms_s2s_deg = o.noise_deg;
    cfg.signal.binocular = o.binocular;
    cfg.signal.post_saccadic_oscillation = !o.no_pso;
    cfg.signal.drift_offset_sd_px = o.drift_offset_sd_px;
    cfg.signal.drift_slope_sd = o.drift_slope_sd;
    cfg.signal.drift_growth_px_per_trial = o.drift_growth_px;
    const sim::SimulatedStudy study = sim::simulate_study(cfg);
    sim::ExportOptions eopt;
    eopt.bids = !o.no_bids;
    eopt.gzip_level = o.gzip_level;
    const std::string protocol = sim::export_study(study, o.folder, eopt);
    std::uint64_t samples = 0;
    for (const auto& r : study.recordings) samples += r.recording.samples.size();
    spdlog::info("simulated {} participants x {} items at {} Hz: {} samples", o.participants, o.items, o.rate_hz, samples);
    spdlog::info("protocol: {}", protocol);
    spdlog::info("simulate: {}", clock.summary());
    return 0;
}

}  // namespace gazemill
