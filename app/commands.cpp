#include "app/commands.h"

#include <algorithm>
#include <nlohmann/json.hpp>
#include <spdlog/spdlog.h>

#include <filesystem>
#include <iostream>
#include <optional>

#include "app/audit_report.h"
#include "app/inspect.h"
#include "app/protocol_parser.h"
#include "app/report_command.h"
#include "app/run_stats.h"
#include "app/shard_merge.h"
#include "app/stale_outputs.h"
#include "app/study_run.h"
#include "app/verify.h"
#include "app/warning_log.h"
#include "io/atomic_file.h"
#include "io/bids_writer.h"
#include "gazemill/version.h"
#include "io/cleaning_io.h"
#include "io/measures_io.h"
#include "io/study_store.h"
#include "io/write_lock.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

// The folder `run` writes into by default: beside the protocol, named by the study.
std::string default_run_folder(const Protocol& protocol) {
  const std::string name = protocol.study_name.empty() ? "study" : protocol.study_name;
  return (fs::absolute(fs::path(protocol.path)).parent_path() / (name + "-output")).lexically_normal().string();
}

std::string stage_summary(const StudyRunReport& r) {
  std::string s;
  for (const auto& [stage, what] : r.stages) s += (s.empty() ? "" : ", ") + std::string(to_string(stage)) + " " + what;
  return s;
}

void log_counts(const StudyRunReport& r) {
  if (!r.recordings_removed.empty()) {
    std::string ids;
    for (const auto& id : r.recordings_removed) ids += (ids.empty() ? "" : ", ") + id;
    spdlog::info("{} {} no longer among the input files: removed from the study with {} results ({})", r.recordings_removed.size(),
                 r.recordings_removed.size() == 1 ? "recording is" : "recordings are", r.recordings_removed.size() == 1 ? "its" : "their", ids);
  }
  if (r.recordings_read > 0) {
    spdlog::info("read {} recordings: {} trials, {} samples, {} messages, {} repairs", r.recordings_read, r.trials, r.samples,
                 r.messages, r.repairs);
  }
  if (r.recordings_detected > 0 && r.events_imported) {
    spdlog::info("imported the fixation lists of {} recordings: {} fixations in trials (no samples: the detect stage is recorded as imported)",
                 r.recordings_detected, r.fixations);
  } else if (r.recordings_detected > 0) {
    spdlog::info("detected in {} recordings ({} samples): {} fixations, {} saccades, {} blinks", r.recordings_detected,
                 r.samples_detected, r.fixations, r.saccades, r.blinks);
  }
  if (r.audit) {
    std::array<std::uint64_t, kAuditLevels> input{}, kept{};
    for (const auto& [g, t] : r.audit->totals) {
      for (std::size_t l = 0; l < kAuditLevels; ++l) {
        input[l] += t.input[l];
        kept[l] += t.kept[l];
      }
    }
    spdlog::info("cleaning kept {}/{} fixations, {}/{} trials, {}/{} participants", kept[1], input[1], kept[2], input[2], kept[3], input[3]);
  }
  if (!r.rows.empty()) {
    FixationPlacement total;
    for (const auto& [k, c] : r.placement) {
      total.on_region += c.on_region;
      total.beside_text += c.beside_text;
      total.off_lines += c.off_lines;
    }
    spdlog::info("measured {} participant x trial x region rows; of {} kept fixations, {} on the regions, {} beside the text, "
                 "{} off the lines (fixation_placement.tsv)",
                 r.rows.size(), total.on_region + total.beside_text + total.off_lines, total.on_region, total.beside_text, total.off_lines);
  }
  if (!r.tables.empty()) spdlog::info("tables in {}", r.tables_folder);
}

// Runs one stage (or, for `run`, the whole study) and logs what happened.
// The study's report, OUTDIR/report.html, written again whenever the store
// changed (or the page is missing or older than the store); a report of an
// older store is never left beside a newer one.
std::string refresh_report(const std::string& store_path, const std::string& folder, bool store_written, const LentToReport& lent = {}) {
  const std::string html = (fs::path(folder) / "report.html").string();
  std::error_code ec;
  // A run killed between its store and its report leaves an older page: the dates tell.
  const bool older = fs::exists(html, ec) && fs::last_write_time(html, ec) < fs::last_write_time(store_path, ec);
  if (store_written || !fs::exists(html, ec) || older) {
    write_study_report(store_path, html, lent);
    spdlog::info("report: {}", html);
  }
  return html;
}

// OUTDIR/run-summary.json: what a run (or a merge) did and where its outputs are.
void write_run_summary(const std::string& summary_path, const StudyRunReport& r, const std::string& store_path, const std::string& tables_folder,
                       const std::string& report_path, const std::string& timing) {
  nlohmann::json summary;
  summary["store"] = fs::absolute(store_path).lexically_normal().string();
  summary["tables"] = fs::absolute(tables_folder).lexically_normal().string();
  if (!report_path.empty()) summary["report"] = fs::absolute(report_path).lexically_normal().string();
  for (const auto& [stage, what] : r.stages) summary["stages"][to_string(stage)] = what;
  summary["recordings"] = r.recordings;
  summary["recordings_read"] = r.recordings_read;
  summary["recordings_detected"] = r.recordings_detected;
  summary["recordings_removed"] = r.recordings_removed;
  summary["samples_read"] = r.samples;
  summary["fixations_detected"] = r.fixations;
  // What the stages warned of when they made the results now in the store (this run's or reused).
  summary["warnings"] = nlohmann::json::array();
  for (const auto& [stage, w] : kept_warnings(StudyStoreReader(store_path))) summary["warnings"].push_back(std::string(to_string(stage)) + ": " + w);
  summary["timing"] = timing;
  remove_leftover_temporaries(summary_path);  // a killed run's
  write_file_atomically(summary_path, summary.dump(2) + "\n");
}

int run_stage(const CommandOptions& o, std::optional<Stage> only) {
  const RunClock clock;
  const Protocol protocol = parse_protocol_file(o.protocol_path);
  StudyRunOptions opt;
  opt.jobs = o.jobs;
  opt.only = only;
  opt.deflate_level = o.deflate_level;
  opt.show_progress = o.show_progress;
  std::string folder;
  if (!only) {
    folder = o.output.empty() ? default_run_folder(protocol) : o.output;
    std::error_code ec;
    fs::create_directories(folder, ec);
    if (ec) throw InputError({folder, 0, ""}, "cannot create the output folder: " + ec.message());
    const std::string name = protocol.study_name.empty() ? "study" : protocol.study_name;
    opt.store_path = (fs::path(folder) / (name + ".gzm.h5")).string();
    opt.tables_folder = (fs::path(folder) / "tables").string();
    if (!o.shard.empty()) {
      // A shard: its recordings ingested and detected into a store of its own; gazemill merge does the rest.
      const auto slash = o.shard.find('/');
      unsigned k = 0, n = 0;
      try {
        if (slash == std::string::npos) throw std::invalid_argument("no /");
        std::size_t used = 0;
        k = static_cast<unsigned>(std::stoul(o.shard.substr(0, slash), &used));
        if (used != slash) throw std::invalid_argument("K");
        n = static_cast<unsigned>(std::stoul(o.shard.substr(slash + 1), &used));
        if (used != o.shard.size() - slash - 1) throw std::invalid_argument("N");
      } catch (const std::exception&) {
        throw InputError({"", 0, "--shard"}, "expected K/N, shard K (from 0) of N, e.g. 0/4; found \"" + o.shard + "\"");
      }
      if (n == 0 || k >= n) throw InputError({"", 0, "--shard"}, "K/N needs 0 <= K < N; found \"" + o.shard + "\"");
      opt.shard_index = k;
      opt.shard_count = n;
      opt.until = Stage::detect;
      opt.store_path = (fs::path(folder) / shard_store_name(name, k, n)).string();
      opt.tables_folder.clear();
    }
  } else {
    opt.store_path = only == Stage::ingest ? (o.output.empty() ? default_store_path(protocol) : o.output)
                                           : (o.store_path.empty() ? default_store_path(protocol) : o.store_path);
    if (only == Stage::clean || only == Stage::measure) opt.tables_folder = o.output.empty() ? default_tables_folder(opt.store_path) : o.output;
  }
  std::string report_path;
  if (!only && o.shard.empty() && !o.no_report) {
    opt.beside_tables = [&](const RunResults& made) {
      // The measures as the store holds them, as the run made them (cheaper than reading them back).
      report_path = refresh_report(opt.store_path, folder, made.store_written,
                                   {made.events.get(), made.measures_wide.get(), made.measures_by_role.get(), made.alignment.get(),
                                    made.cleaned.get(), made.cleaning_rows.get(), made.audit});
    };
  }
  const StudyRunReport r = run_study(protocol, opt);
  if (r.beside_tables_error) std::rethrow_exception(r.beside_tables_error);
  if (r.store_written) {
    for (const auto& aside : set_aside_stale_outputs(opt.store_path, opt.tables_folder)) {
      // The run that makes them again writes where they were: `-o` unless that is the default folder.
      const fs::path made_in = fs::absolute(aside).parent_path();
      std::error_code ec;
      const bool default_folder = fs::equivalent(made_in, default_run_folder(protocol), ec);
      spdlog::warn("renamed to {}: it was made from results the store no longer holds as current, and nothing should read it "
                   "unawares (gazemill run {}{} makes the tables and the report again)",
                   aside, o.protocol_path, default_folder ? "" : " -o " + made_in.string());
    }
  }
  if (!only && o.shard.empty()) remove_stale_outputs(folder);
  log_counts(r);
  const std::string timing = clock.summary(r.input_bytes);
  spdlog::info("{}: {}", opt.store_path, stage_summary(r));
  const std::string summary_path = (fs::path(folder) / "run-summary.json").string();
  const bool any_ran = std::any_of(r.stages.begin(), r.stages.end(), [](const auto& s) { return s.second == "ran" || s.second == "imported"; });
  std::error_code exists_ec;
  if (!only && o.shard.empty() && !any_ran && fs::exists(summary_path, exists_ec)) {
    // Its counts are of the run that made the outputs; this one read and detected nothing.
    spdlog::info("nothing changed: {} still describes the outputs", summary_path);
  } else if (!only && o.shard.empty()) {
    write_run_summary(summary_path, r, opt.store_path, opt.tables_folder, report_path, timing);
  }
  spdlog::info("{}: {}", only ? to_string(*only) : "run", timing);
  return 0;
}

void add_run_options(CLI::App* cmd, CommandOptions& o) {
  cmd->add_option("-j,--jobs", o.jobs, "Recordings processed at once (default: one per core)")->check(CLI::Range(1u, 1024u));
  cmd->add_option("--deflate-level", o.deflate_level, "Deflate level of the store's sample chunks: 1 (fastest, by ISA-L) to 9 (smallest)")
      ->check(CLI::Range(1, 9))->capture_default_str();
}

}  // namespace

void register_commands(CLI::App& app, CommandOptions& o) {
  auto* run = app.add_subcommand("run", "The whole study: ingest, detect, clean, align and measure, redoing only what changed");
  run->add_option("protocol", o.protocol_path, "Protocol file (TOML)")->required()->check(CLI::ExistingFile);
  run->add_option("-o,--output", o.output, "Folder for the store, the tables and the run summary (default: <study>-output beside the protocol)");
  add_run_options(run, o);
  run->add_flag("--no-report", o.no_report, "Write no report.html (gazemill report writes one later)");
  run->add_option("--shard", o.shard, "Only shard K of N of the recordings (K from 0), for a cluster; then gazemill merge")
      ->check([](const std::string& v) -> std::string {  // a usage mistake: exit 2, as for any other option
        const auto slash = v.find('/');
        const auto whole = [](const std::string& t) { return !t.empty() && t.size() < 10 && t.find_first_not_of("0123456789") == std::string::npos; };
        if (slash == std::string::npos || !whole(v.substr(0, slash)) || !whole(v.substr(slash + 1))) return "expected K/N, shard K (from 0) of N, e.g. 0/4";
        const unsigned long k = std::stoul(v.substr(0, slash)), n = std::stoul(v.substr(slash + 1));
        return n == 0 || k >= n ? "K/N needs 0 <= K < N" : "";
      });

  auto* merge = app.add_subcommand("merge", "Join the shard stores of a study run on many machines, and finish the study");
  merge->add_option("output", o.output, "Folder for the joined store, the tables and the run summary")->required();
  merge->add_option("shards", o.shards, "The shard stores (gazemill run --shard K/N wrote them)")->required();
  merge->add_flag("--no-report", o.no_report, "Write no report.html (gazemill report writes one later)");

  auto* ingest = app.add_subcommand("ingest", "Read the raw exports a protocol names into a new HDF5 study store");
  ingest->add_option("protocol", o.protocol_path, "Protocol file (TOML)")->required()->check(CLI::ExistingFile);
  ingest->add_option("-o,--output", o.output, "Store to write (default: <protocol folder>/<study name>.gzm.h5)");
  add_run_options(ingest, o);

  auto* detect = app.add_subcommand("detect", "Detect fixations, saccades and blinks in every trial of a store");
  detect->add_option("protocol", o.protocol_path, "Protocol file with a [detection] section (defaults apply without one)")
      ->required()->check(CLI::ExistingFile);
  detect->add_option("-s,--store", o.store_path, "Study store (default: the one ingest writes for this protocol)");
  add_run_options(detect, o);

  auto* clean = app.add_subcommand("clean", "Apply the protocol's [[cleaning]] rules to the detected events, with an audit");
  clean->add_option("protocol", o.protocol_path, "Protocol file with [[cleaning]] rules")->required()->check(CLI::ExistingFile);
  clean->add_option("-s,--store", o.store_path, "Study store (default: the one ingest writes for this protocol)");
  clean->add_option("-o,--output", o.output, "Folder for the tables (default: <store name>-tables beside the store)");

  auto* align = app.add_subcommand("align", "Assign every cleaned fixation to its text line (drift correction)");
  align->add_option("protocol", o.protocol_path, "Protocol file with a [regions] section")->required()->check(CLI::ExistingFile);
  align->add_option("-s,--store", o.store_path, "Study store (default: the one ingest writes for this protocol)");

  auto* measure = app.add_subcommand("measure", "Map fixations to regions and compute the reading-time measures");
  measure->add_option("protocol", o.protocol_path, "Protocol file with a [regions] section")->required()->check(CLI::ExistingFile);
  measure->add_option("-s,--store", o.store_path, "Study store (default: the one ingest writes for this protocol)");
  measure->add_option("-o,--output", o.output, "Folder for the tables (default: <store name>-tables beside the store)");

  register_simulate_command(app, o.simulate);

  register_score_command(app, o.score);

  register_report_command(app, o.report);

  auto* audit = app.add_subcommand("audit", "Show what each cleaning rule removed, per condition");
  audit->add_option("store", o.store_argument, "Study store (.gzm.h5)")->required();
  audit->add_option("--by", o.audit_by, "Break the table down: participant")->check(CLI::IsMember({"participant"}));

  auto* verify = app.add_subcommand("verify", "Re-run the stored protocol on the recorded inputs and compare every derived dataset");
  verify->add_option("store", o.store_argument, "Study store (.gzm.h5)")->required();

  auto* exp = app.add_subcommand("export", "Write a store's tables: fixations, saccades and blinks, the audit and the measures");
  exp->add_option("store", o.store_argument, "Study store (.gzm.h5)")->required();
  auto* tables_out = exp->add_option("-o,--output", o.output, "Folder for the tables (default: <store name>-tables beside the store)");
  // Either the tables or a BIDS dataset: -o beside --bids was ignored without a word.
  exp->add_option("--bids", o.bids_folder, "Write the raw samples and detected events as a BIDS eye-tracking dataset into this new folder")
      ->excludes(tables_out);
  exp->add_option("--task", o.bids_task, "The BIDS task label (letters and digits; default: the study's name, else \"reading\")");

  auto* inspect = app.add_subcommand("inspect", "Show the recordings, trials, data loss and each stage's state in a study store");
  inspect->add_option("store", o.store_argument, "Study store (.gzm.h5)")->required();
}

int run_selected_command(const CLI::App& app, const CommandOptions& o) {
  if (app.got_subcommand("run")) return run_stage(o, std::nullopt);
  if (app.got_subcommand("merge")) {
    const RunClock clock;
    const StudyRunReport r = merge_shards(o.shards, o.output);
    log_counts(r);
    const std::string report = o.no_report ? std::string() : refresh_report(r.store_path, o.output, true);  // merge always writes its store
    write_run_summary((fs::path(o.output) / "run-summary.json").string(), r, r.store_path, r.tables_folder, report, clock.summary());
    spdlog::info("merge: {}, {}", stage_summary(r), clock.summary());
    return 0;
  }
  for (Stage s : kStages) {
    if (app.got_subcommand(to_string(s))) return run_stage(o, s);
  }
  if (app.got_subcommand("simulate")) return run_simulate(o.simulate);
  if (app.got_subcommand("score")) return run_score(o.score);
  if (app.got_subcommand("report")) return run_report(o.report);
  if (app.got_subcommand("audit")) {
    StudyStoreReader store(o.store_argument);
    print_audit(read_audit(store), o.audit_by == "participant", std::cout);
    return 0;
  }
  if (app.got_subcommand("verify")) return verify_store(o.store_argument, std::cout) ? 0 : 1;
  if (app.got_subcommand("export") && !o.bids_folder.empty()) {
    StudyStoreReader store(o.store_argument);
    const auto ingest = store.stage_record(Stage::ingest);
    if (!ingest) throw InputError({o.store_argument, 0, ""}, "has no ingested recordings to export");
    const Protocol protocol = parse_protocol_text(ingest->protocol_text, ingest->protocol_path);
    const auto detect = store.stage_record(Stage::detect);
    const bool events = detect && detect->state == StageState::current;
    if (!events) spdlog::warn("{}: no current detected events; the dataset gets the samples and messages only", o.store_argument);
    std::string task = o.bids_task.empty() ? bids_label(protocol.study_name) : o.bids_task;
    if (task.empty()) task = "reading";
    if (bids_label(task) != task) throw InputError({"", 0, "--task"}, "a BIDS label has letters and digits only; found \"" + task + "\"");
    const BidsExportSummary s = write_bids_dataset(store, o.bids_folder, task, protocol.study_name, kVersion);
    spdlog::info("{}: a BIDS dataset of {} recordings (task-{}), {} files, {} detected events", o.bids_folder, s.recordings, task, s.files,
                 s.event_rows);
    return 0;
  }
  if (app.got_subcommand("export")) {
    // The tables as the latest current stage's protocol describes them (its design and regions).
    StudyStoreReader store(o.store_argument);
    std::optional<StageRecord> last;
    for (Stage s : kStages) {
      const auto r = store.stage_record(s);
      if (!r || r->state != StageState::current) break;
      last = r;
    }
    if (!last || last->stage == Stage::ingest) {
      throw InputError({o.store_argument, 0, ""}, "has no detected events yet; run gazemill run (or detect) first");
    }
    const std::string folder = o.output.empty() ? default_tables_folder(o.store_argument) : o.output;
    const auto written = write_study_tables(o.store_argument, folder, parse_protocol_text(last->protocol_text, last->protocol_path));
    if (written.empty()) spdlog::info("{}: the tables there are already those of this store", folder);
    else spdlog::info("{}: {} tables written", folder, written.size());
    return 0;
  }
  if (app.got_subcommand("inspect")) {
    print_store_overview(o.store_argument, std::cout);
    return 0;
  }
  return 2;
}

}  // namespace gazemill
