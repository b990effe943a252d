#include "app/line_score.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <filesystem>
#include <set>

#include "alignment/drift_registry.h"
#include "app/align.h"
#include "app/clean.h"
#include "app/protocol_parser.h"
#include "app/study_run.h"
#include "app/temp_folder.h"
#include "app/text_table.h"
#include "io/region_files.h"
#include "io/study_store.h"
#include "io/tsv_table.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

struct TrueFixation {
  Microseconds start_us = 0, end_us = 0;
  int line = 0;  // 1-based; 0 = on no line (the start marker)
};

using TrialKey = std::pair<std::string, std::string>;  // participant, trial

// The kind of drift that moved a trial's text most, in px at the text's extent
// (offset; slope across half the screen; shift across the text's lines; noise SD).
std::string largest_distortion(const TsvTable& t, std::size_t r, double half_width_px, double text_height_px, double line_height_px) {
  const double offset = std::abs(t.number(r, "offset_px") + t.number(r, "session_px"));
  const double slope = std::abs(t.number(r, "slope")) * half_width_px;
  const double shift = std::abs(t.number(r, "shift")) * text_height_px;
  const double noise = t.number(r, "noise_sd_px");
  const double most = std::max({offset, slope, shift, noise});
  if (most < 0.25 * line_height_px) return "largest: under a quarter line";
  if (most == offset) return "largest: offset";
  if (most == slope) return "largest: slope";
  if (most == shift) return "largest: shift";
  return "largest: noise";
}

}  // namespace

std::vector<LineScore> score_lines(const std::string& folder, const std::string& protocol_path, const std::vector<std::string>& methods) {
  Protocol p = parse_protocol_file(protocol_path.empty() ? (fs::path(folder) / "gazemill.toml").string() : protocol_path);
  if (!p.regions.present()) throw InputError({p.path, 0, "regions"}, "scoring lines needs the protocol's [regions]");
  const TempFolder tmp("gazemill-lines-");
  StudyRunOptions o;
  o.store_path = (tmp.path() / "lines.gzm.h5").string();
  o.until = Stage::clean;
  run_study(p, o);
  const StudyStoreReader store(o.store_path);
  const std::vector<CleanedRecording> cleaned = cleaned_recordings(store);
  const RegionCatalogue regions = load_regions(p);

  // The truth: fixations with their lines, and each trial's block and distortions.
  const fs::path truth = fs::path(folder) / "truth";
  std::map<TrialKey, std::vector<TrueFixation>> true_fixations;
  {
    TsvTable t((truth / "fixations.tsv").string());
    for (std::size_t r = 0; r < t.rows(); ++r) {
      const std::string line = t.text(r, "line");
      true_fixations[{t.text(r, "participant"), t.text(r, "trial")}].push_back(
          {static_cast<Microseconds>(t.number(r, "start_us")), static_cast<Microseconds>(t.number(r, "end_us")), line.empty() ? 0 : std::stoi(line)});
    }
  }
  std::map<TrialKey, std::vector<std::string>> groups_of;
  {
    TsvTable trials((truth / "trials.tsv").string());
    TsvTable drift((truth / "drift.tsv").string());
    const double line_height = p.regions.layout.line_height_px;
    for (std::size_t r = 0; r < trials.rows(); ++r) {
      const TrialKey k{trials.text(r, "participant"), trials.text(r, "trial")};
      groups_of[k] = {"all", trials.text(r, "block")};
    }
    for (std::size_t r = 0; r < drift.rows(); ++r) {
      const TrialKey k{drift.text(r, "participant"), drift.text(r, "trial")};
      const auto g = groups_of.find(k);
      if (g == groups_of.end()) continue;
      const double lines = std::max(1.0, trials.number(r, "lines"));
      g->second.push_back(largest_distortion(drift, r, 0.5 * p.screen->width_px, (lines - 1) * line_height, line_height));
    }
  }

  std::vector<std::string> names = methods.empty() ? drift_method_names() : methods;
  std::vector<LineScore> out;
  for (const auto& m : names) {
    Protocol q = p;
    q.alignment.method = m;
    q.alignment.members.clear();
    q.alignment.parameters.clear();
    LineScore score;
    score.method = m;
    const auto aligned = align_study(q, regions, cleaned);
    for (std::size_t r = 0; r < cleaned.size(); ++r) {
      const CleanedRecording& rec = cleaned[r];
      for (const auto& f : rec.kept) {
        const TrialKey k{rec.meta.participant, f.fixation.trial};
        const auto truth_it = true_fixations.find(k);
        if (truth_it == true_fixations.end()) continue;
        const auto line = aligned[r].fixations.find(f.id);
        if (line == aligned[r].fixations.end()) continue;  // in an excluded trial
        // The true fixation it overlaps most.
        const TrueFixation* best = nullptr;
        Microseconds most = 0;
        for (const auto& t : truth_it->second) {
          const Microseconds overlap = std::min(t.end_us, f.fixation.end_us) - std::max(t.start_us, f.fixation.start_us);
          if (overlap > most) {
            most = overlap;
            best = &t;
          }
        }
        if (!best || best->line == 0) continue;
        const bool right = line->second.line + 1 == best->line;
        for (const auto& g : groups_of[k]) {
          auto& c = score.right_of[g];
          c.first += right;
          ++c.second;
        }
      }
    }
    out.push_back(std::move(score));
  }
  return out;
}

void print_line_scores(const std::vector<LineScore>& scores, std::ostream& out) {
  std::set<std::string> groups;
  for (const auto& s : scores) {
    for (const auto& [g, c] : s.right_of) groups.insert(g);
  }
  std::vector<std::string> head = {"method"};
  std::vector<bool> right = {false};
  std::vector<std::string> order = {"all", "sentence", "passage"};
  for (const auto& g : groups) {
    if (std::find(order.begin(), order.end(), g) == order.end()) order.push_back(g);
  }
  std::vector<std::string> present;
  for (const auto& g : order) {
    if (!groups.count(g)) continue;
    present.push_back(g);
    std::uint64_t n = 0;
    if (!scores.empty() && scores.front().right_of.count(g)) n = scores.front().right_of.at(g).second;
    head.push_back(g + " (" + std::to_string(n) + ")");
    right.push_back(true);
  }
  TextTable t(head, right);
  for (const auto& s : scores) {
    std::vector<std::string> row = {s.method};
    for (const auto& g : present) {
      const auto it = s.right_of.find(g);
      row.push_back(it == s.right_of.end() || it->second.second == 0 ? "-"
                                                                      : fmt::format("{:.1f} %", 100.0 * static_cast<double>(it->second.first) /
                                                                                                    static_cast<double>(it->second.second)));
    }
    t.add_row(row);
  }
  out << "share of fixations on their true line (fixations matched to the truth in brackets)\n";
  t.print(out);
}

std::string line_scores_json(const std::vector<LineScore>& scores) {
  nlohmann::json j = nlohmann::json::array();
  for (const auto& s : scores) {
    nlohmann::json m;
    m["method"] = s.method;
    for (const auto& [g, c] : s.right_of) m["groups"][g] = {{"right", c.first}, {"matched", c.second}};
    j.push_back(m);
  }
  return j.dump(2) + "\n";
}

}  // namespace gazemill
