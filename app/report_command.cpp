#include "app/report_command.h"

#include <spdlog/spdlog.h>

#include <chrono>
#include <cstring>
#include <filesystem>

#include "app/report_data.h"
#include "app/run_stats.h"
#include "io/report_html.h"
#include "io/write_lock.h"

namespace gazemill {
namespace fs = std::filesystem;

std::string default_report_path(const std::string& store_path) {
  const fs::path p(store_path);
  std::string name = p.filename().string();
  for (const char* suffix : {".gzm.h5", ".h5"}) {
    if (name.size() > std::strlen(suffix) && name.ends_with(suffix)) {
      name.resize(name.size() - std::strlen(suffix));
      break;
    }
  }
  return (p.parent_path() / (name + "-report.html")).string();
}

void register_report_command(CLI::App& app, ReportOptions& o) {
  auto* cmd = app.add_subcommand("report", "Write one self-contained HTML page to judge a study at a glance, from its store");
  cmd->add_option("store", o.store_path, "Study store (.gzm.h5)")->required();
  cmd->add_option("-o,--output", o.output, "HTML file to write (default: <store name>-report.html beside the store)");
  cmd->add_option("--max-points", o.max_points_per_trial, "Points per trial in the trial viewer's time course")
      ->check(CLI::Range(std::size_t{10}, std::size_t{100000}))
      ->capture_default_str();
}

namespace {
void write_report(const std::string& store_path, const std::string& html_path, std::size_t max_points, const LentToReport& lent = {}) {
  ReportDataOptions opt;
  opt.max_points_per_trial = max_points;
  opt.pack_viewer = true;
  opt.events = lent.events;
  opt.measures_wide = lent.measures_wide;
  opt.measures_by_role = lent.measures_by_role;
  opt.alignment = lent.alignment;
  opt.cleaned = lent.cleaned;
  opt.cleaning_rows = lent.cleaning_rows;
  opt.audit = lent.audit;
  const auto t0 = std::chrono::steady_clock::now();
  auto since = [&t0] { return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count(); };
  const ReportModel model = assemble_report(store_path, opt);
  spdlog::debug("report: assembled after {:.2f} s", since());
  // A writer killed while writing this page left its temporary file: gone with the next page.
  remove_leftover_temporaries(html_path);
  write_report_html(model, html_path);
  spdlog::debug("report: page written after {:.2f} s", since());
  for (const auto& note : model.run.notes) spdlog::warn("report: {}", note);
}
}  // namespace

void write_study_report(const std::string& store_path, const std::string& html_path, const LentToReport& lent) {
  write_report(store_path, html_path, ReportOptions{}.max_points_per_trial, lent);
}

int run_report(const ReportOptions& o) {
  const RunClock clock;
  const std::string out = o.output.empty() ? default_report_path(o.store_path) : o.output;
  write_report(o.store_path, out, o.max_points_per_trial);
  std::error_code ec;
  const auto bytes = fs::file_size(out, ec);
  spdlog::info("report: {} ({:.1f} MB)", out, ec ? 0.0 : static_cast<double>(bytes) / 1e6);
  spdlog::info("report: {}", clock.summary(0));
  return 0;
}

}  // namespace gazemill
