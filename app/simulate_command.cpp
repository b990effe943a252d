#include "app/simulate_command.h"

#include <fmt/format.h>
#include <spdlog/spdlog.h>

#include <stdexcept>

#include "app/run_stats.h"
#include "sim/study_export.h"
#include "sim/study_simulator.h"

namespace gazemill {

namespace {
sim::SimulationConfig simulation_config(const SimulateOptions& o);
}  // namespace

void register_simulate_command(CLI::App& app, SimulateOptions& o) {
  auto* sim = app.add_subcommand("simulate",
                                 "Write a simulated reading study with its ground truth (invented data): a 2 x 2 design, target word "
                                 "frequency (frequent/rare) x parafoveal preview (valid/invalid), counterbalanced over four lists, "
                                 "and a block of multi-line passages with vertical drift");
  const std::string items = std::to_string(sim::bundled_sentence_items().size());
  const std::string passages = std::to_string(sim::bundled_passages().size());
  sim->add_option("-o,--output", o.folder, "Folder to write the study into")->required();
  sim->add_option("--participants", o.participants, "Number of simulated readers; they fill the four lists in turn")
      ->check(CLI::Range(1, 1000))->capture_default_str();
  sim->add_option("--items", o.items, "Sentence items, each a different bundled text (a multiple of 4, at most " + items + ")")
      ->check(CLI::Range(4, 1000))->capture_default_str();
  sim->add_option("--passages", o.passages, "Passages of 5-12 lines, read after the sentences (at most " + passages + ")")
      ->check(CLI::Range(0, 1000))->capture_default_str();
  sim->add_option("--rate", o.rate_hz, "Sampling rate in Hz")->check(CLI::Range(100.0, 2000.0))->capture_default_str();
  sim->add_option("--seed", o.seed, "Random seed; the same seed gives the same study")->capture_default_str();
  sim->add_option("--noise-deg", o.noise_deg, "Precision as RMS sample-to-sample distance (deg)")->check(CLI::Range(0.0, 2.0))->capture_default_str();
  sim->add_flag("--binocular", o.binocular, "Record both eyes");
  sim->add_flag("--no-pso", o.no_pso, "No post-saccadic oscillation");
  sim->add_flag("--no-bids", o.no_bids, "Skip the BIDS copy");
  sim->add_option("--gzip-level", o.gzip_level, "zlib level of the written .gz files, 1 (fast) to 9 (small)")->check(CLI::Range(1, 9))->capture_default_str();
  sim->add_option("--questions", o.question_share, "Share of trials followed by a comprehension question")->check(CLI::Range(0.0, 1.0))->capture_default_str();
  sim->add_option("--line-height-px", o.line_height_px, "Line spacing of the text (px); written to the protocol's [regions]")
      ->check(CLI::Range(20.0, 80.0))->capture_default_str();
  sim->add_option("--wrap-chars", o.wrap_chars, "Line width in characters; written to the protocol's [regions]")
      ->check(CLI::Range(50, 140))->capture_default_str();
  sim->add_option("--drift-offset-px", o.drift_offset_sd_px, "Sentences: SD of the per-trial vertical offset (px)")->check(CLI::Range(0.0, 500.0))->capture_default_str();
  sim->add_option("--drift-slope", o.drift_slope_sd, "Sentences: SD of the vertical drift slope across the screen (px per px)")->check(CLI::Range(0.0, 1.0))->capture_default_str();
  sim->add_option("--drift-growth-px", o.drift_growth_px, "Vertical drift added per trial over the session (px)")->check(CLI::Range(0.0, 50.0))->capture_default_str();
  sim->add_option("--passage-noise", o.passage_noise_lines, "Passages: largest SD of a fixation's vertical noise (line heights); each trial draws 0..this")
      ->check(CLI::Range(0.0, 2.0))->capture_default_str();
  sim->add_option("--passage-slope", o.passage_slope, "Passages: largest vertical drift slope (px per px); each trial draws -this..this")
      ->check(CLI::Range(0.0, 1.0))->capture_default_str();
  sim->add_option("--passage-shift", o.passage_shift, "Passages: largest shift (px per px below the first line); each trial draws -this..this")
      ->check(CLI::Range(0.0, 1.0))->capture_default_str();
  sim->add_option("--passage-offset", o.passage_offset_lines, "Passages: largest vertical offset (line heights); each trial draws -this..this")
      ->check(CLI::Range(0.0, 5.0))->capture_default_str();
  sim->add_option("--passage-within", o.passage_within, "Passages: largest probability of a within-line regression per fixation; each trial draws 0..this")
      ->check(CLI::Range(0.0, 1.0))->capture_default_str();
  sim->add_option("--passage-between", o.passage_between, "Passages: largest probability of a regression to an earlier line per fixation; each trial draws 0..this")
      ->check(CLI::Range(0.0, 1.0))->capture_default_str();
  sim->add_option("--threads", o.threads, "Participants simulated at once (0: one per core); each holds one participant in memory")
      ->check(CLI::Range(0u, 256u))->capture_default_str();
  // Choices that only make sense together are usage errors too (exit 2), found before anything is written.
  sim->callback([&o] {
    try {
      const sim::StudySimulator check(simulation_config(o));
    } catch (const std::invalid_argument& e) {
      throw CLI::ValidationError("simulate", e.what());
    }
  });
}

namespace {

// Throws std::invalid_argument when the options ask for what the bundled texts cannot give.
sim::SimulationConfig simulation_config(const SimulateOptions& o) {
  sim::SimulationConfig cfg;
  const auto bundled_items = sim::bundled_sentence_items().size(), bundled_passages = sim::bundled_passages().size();
  if (static_cast<std::size_t>(o.items) > bundled_items) {
    throw std::invalid_argument(fmt::format("--items {}: {} different texts are bundled, and no text is shown twice", o.items, bundled_items));
  }
  if (static_cast<std::size_t>(o.passages) > bundled_passages) {
    throw std::invalid_argument(fmt::format("--passages {}: {} passages are bundled", o.passages, bundled_passages));
  }
  cfg.design = sim::demo_design(static_cast<std::size_t>(o.items), static_cast<std::size_t>(o.passages));
  if (o.items % static_cast<int>(cfg.design.cells()) != 0) {
    throw std::invalid_argument(fmt::format("--items {}: the items do not divide over the {} cells of the design; every list should "
                                            "see every cell equally often, so give a multiple of {}",
                                            o.items, cfg.design.cells(), cfg.design.cells()));
  }
  cfg.design.participants = o.participants;
  cfg.design.question_share = o.question_share;
  cfg.seed = o.seed;
  cfg.layout.line_height_px = o.line_height_px;
  cfg.layout.wrap_width_chars = o.wrap_chars;
  cfg.signal.sample_rate_hz = o.rate_hz;
  cfg.signal.noise_rms_s2s_deg = o.noise_deg;
  cfg.signal.binocular = o.binocular;
  cfg.signal.post_saccadic_oscillation = !o.no_pso;
  cfg.signal.drift_offset_sd_px = o.drift_offset_sd_px;
  cfg.signal.drift_slope_sd = o.drift_slope_sd;
  cfg.signal.drift_growth_px_per_trial = o.drift_growth_px;
  cfg.passage_distortion.noise_sd_lines = o.passage_noise_lines;
  cfg.passage_distortion.slope = o.passage_slope;
  cfg.passage_distortion.shift = o.passage_shift;
  cfg.passage_distortion.offset_lines = o.passage_offset_lines;
  cfg.passage_distortion.within_line_regression = o.passage_within;
  cfg.passage_distortion.between_line_regression = o.passage_between;
  return cfg;
}

}  // namespace

int run_simulate(const SimulateOptions& o) {
  const RunClock clock;
  const sim::SimulationConfig cfg = simulation_config(o);
  sim::ExportOptions eopt;
  eopt.bids = !o.no_bids;
  eopt.gzip_level = o.gzip_level;
  const sim::ExportSummary s = sim::simulate_to_folder(cfg, o.folder, eopt, o.threads);
  const auto& d = cfg.design;
  std::string factors;
  for (const auto& f : d.factors) {
    std::string levels;
    for (const auto& l : f.levels) levels += (levels.empty() ? "" : "/") + l.name;
    factors += (factors.empty() ? "" : " x ") + f.name + " (" + levels + ")";
  }
  // What was written, as the other commands report (stderr; -q silences it).
  spdlog::info("simulated study \"{}\" (invented data) in {}", d.name, o.folder);
  spdlog::info("{} participants in {} counterbalancing lists, {} trials each: {} sentence items, each seen once in one cell of {}; "
               "then {} passage{} (every word a region) with vertical drift; a comprehension question after {:.0f} % of the trials",
               s.participants, d.lists(), s.participants ? s.trials / s.participants : 0, d.items.size(), factors, d.passages.size(),
               d.passages.size() == 1 ? "" : "s", 100.0 * d.question_share);
  spdlog::info("{} samples at {:g} Hz{}, {} true fixations on the text", s.samples, o.rate_hz, o.binocular ? " (both eyes)" : "", s.fixations);
  spdlog::info("raw/: one sample export per participant (empty field = missing, pupil diameter in mm){}", o.no_bids ? "" : "; bids/: the same in the BIDS layout");
  spdlog::info("{}: reads them ([trials], [design], [regions]){}", s.protocol, o.no_bids ? "" : "; gazemill-bids.toml reads bids/");
  spdlog::info("items.tsv, regions.tsv: the regions; truth/: labels per sample, fixations with true line and region, drift, trials, "
               "participants; simulation.json: every setting and the seed");
  spdlog::info("simulate: {}", clock.summary());
  return 0;
}

}  // namespace gazemill
