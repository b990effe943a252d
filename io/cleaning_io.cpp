#include "io/cleaning_io.h"

#include <unistd.h>

#include <cstdio>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>

#include "io/hdf5_util.h"
#include "io/report_store.h"
#include "pipeline/design.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace {

AuditLevel level_named(const std::string& s) {
  for (std::size_t l = 0; l < kAuditLevels; ++l) {
    if (s == to_string(static_cast<AuditLevel>(l))) return static_cast<AuditLevel>(l);
  }
  throw std::invalid_argument("unknown audit level " + s);
}

// The levels a rule of `level` can remove at: its own and everything below it.
std::vector<AuditLevel> levels_reached(AuditLevel level) {
  std::vector<AuditLevel> out;
  for (std::size_t l = 0; l <= static_cast<std::size_t>(level); ++l) {
    if (level == AuditLevel::fixation && l == 0) continue;  // fixation rules remove no samples
    out.push_back(static_cast<AuditLevel>(l));
  }
  return out;
}

}  // namespace

std::vector<AuditRow> audit_rows(const AuditReport& r) {
  std::vector<AuditRow> rows;
  for (std::size_t rule = 0; rule < r.rules.size(); ++rule) {
    for (AuditLevel level : levels_reached(r.rule_levels[rule])) {
      for (const auto& [group, totals] : r.totals) {
        const bool participant_row = group.second.empty();
        if (participant_row != (level == AuditLevel::participant)) continue;
        AuditRow row;
        row.order = rule + 1;
        row.rule = r.rules[rule];
        row.kind = r.rule_kinds[rule];
        row.level = level;
        row.participant = group.first;
        row.cell = group.second;
        const auto s = r.sequential.find({rule, group.first, group.second});
        const auto a = r.alone.find({rule, group.first, group.second});
        const std::size_t l = static_cast<std::size_t>(level);
        if (s != r.sequential.end()) {
          row.removed_sequential = s->second.removed[l];
          if (level == AuditLevel::fixation) {
            row.merged_sequential = s->second.merged;
            row.removed_sequential += s->second.merged;
          }
        }
        if (a != r.alone.end()) {
          row.removed_alone = a->second.removed[l];
          if (level == AuditLevel::fixation) {
            row.merged_alone = a->second.merged;
            row.removed_alone += a->second.merged;
          }
        }
        rows.push_back(row);
      }
    }
  }
  return rows;
}

void write_cleaning(StudyStoreWriter& store, const CleaningOutcome& out, const std::map<std::string, RecordingCleaningRows>& rows) {
  std::map<std::string, std::vector<const CleanTrial*>> by_recording;
  for (const auto& p : out.state.participants) {
    for (const auto& t : p.trials) by_recording[t.recording].push_back(&t);
  }
  for (const auto& [rec, trials] : by_recording) {
    H5::Group g = store.group("recordings/" + rec + "/clean");
    std::vector<std::uint32_t> in_id, rm_id;
    std::vector<std::string> in_trial, rm_trial, rm_rule, rm_reason, t_trial, t_rule, t_reason;
    std::vector<std::int64_t> in_start, in_end, rm_start, rm_end, rm_into;
    std::vector<double> in_dur, in_x, in_y, in_xd, in_yd, rm_dur;
    std::vector<std::uint32_t> in_merged;
    std::vector<std::uint8_t> t_kept;
    for (const CleanTrial* t : trials) {
      for (const auto& f : t->fixations) {
        if (!f.kept) continue;
        in_id.push_back(f.id);
        in_trial.push_back(t->trial);
        in_start.push_back(f.fixation.start_us);
        in_end.push_back(f.fixation.end_us);
        in_dur.push_back(f.duration_ms);
        in_x.push_back(f.fixation.x_px);
        in_y.push_back(f.fixation.y_px);
        in_xd.push_back(f.fixation.x_deg);
        in_yd.push_back(f.fixation.y_deg);
        in_merged.push_back(f.merged_count);
      }
    }
    for (const RemovedFixationRow& r : rows.at(rec).removed) {
      rm_id.push_back(r.input_id);
      rm_trial.push_back(r.trial);
      rm_start.push_back(r.start_us);
      rm_end.push_back(r.end_us);
      rm_dur.push_back(r.duration_ms);
      rm_rule.push_back(r.rule);
      rm_reason.push_back(r.reason);
      rm_into.push_back(r.merged_into);
    }
    for (const TrialVerdictRow& v : rows.at(rec).verdicts) {
      t_trial.push_back(v.trial);
      t_kept.push_back(v.kept);
      t_rule.push_back(v.rule);
      t_reason.push_back(v.reason);
    }
    H5::Group f = h5::create_group(g, "fixations");
    h5::write_column(f, "input_id", in_id);
    h5::write_strings(f, "trial", in_trial);
    h5::write_column(f, "start_us", in_start, "us");
    h5::write_column(f, "end_us", in_end, "us");
    h5::write_column(f, "duration_ms", in_dur, "ms");
    h5::write_column(f, "x_px", in_x, "px");
    h5::write_column(f, "y_px", in_y, "px");
    h5::write_column(f, "x_deg", in_xd, "deg");
    h5::write_column(f, "y_deg", in_yd, "deg");
    h5::write_column(f, "merged_count", in_merged);
    H5::Group r = h5::create_group(g, "removed_fixations");
    h5::write_column(r, "input_id", rm_id);
    h5::write_strings(r, "trial", rm_trial);
    h5::write_column(r, "start_us", rm_start, "us");
    h5::write_column(r, "end_us", rm_end, "us");
    h5::write_column(r, "duration_ms", rm_dur, "ms");
    h5::write_strings(r, "rule", rm_rule);
    h5::write_strings(r, "reason", rm_reason);
    h5::write_column(r, "merged_into", rm_into);
    H5::Group tr = h5::create_group(g, "trials");
    h5::write_strings(tr, "trial", t_trial);
    h5::write_column(tr, "kept", t_kept);
    h5::write_strings(tr, "rule", t_rule);
    h5::write_strings(tr, "reason", t_reason);
  }
}

namespace {

// One column of levels per factor, under <group>/cell/.
void write_cells(H5::Group& group, const std::vector<std::string>& factors, const std::vector<std::string>& keys) {
  H5::Group cell = h5::create_group(group, "cell");
  for (std::size_t f = 0; f < factors.size(); ++f) {
    std::vector<std::string> levels;
    for (const auto& k : keys) {
      const auto l = cell_levels(k);
      levels.push_back(f < l.size() ? l[f] : std::string());
    }
    h5::write_strings(cell, factors[f], levels);
  }
}

std::vector<std::string> read_cells(const H5::Group& group, const std::vector<std::string>& factors, std::size_t rows,
                                    const std::vector<std::string>& participant_level) {
  std::vector<std::vector<std::string>> columns;
  for (const auto& f : factors) columns.push_back(h5::read_strings(group.openGroup("cell"), f));
  std::vector<std::string> keys;
  for (std::size_t i = 0; i < rows; ++i) {
    if (participant_level[i] == "participant") {
      keys.emplace_back();
      continue;
    }
    std::vector<std::string> levels;
    for (const auto& c : columns) levels.push_back(c.at(i));
    keys.push_back(cell_key(levels));
  }
  return keys;
}

std::string na_or(const std::string& s) { return s.empty() ? "NA" : s; }

// The factor columns of a TSV row for a cell ("NA" for whole participants and unset levels).
std::string factor_fields(const AuditReport& r, const std::string& key) {
  const auto levels = cell_levels(key);
  std::string out;
  for (std::size_t f = 0; f < r.factors.size(); ++f) out += "\t" + na_or(f < levels.size() ? levels[f] : std::string());
  return out;
}

std::string factor_header(const AuditReport& r) {
  std::string out;
  for (const auto& f : r.factors) out += "\t" + f;
  return out;
}

}  // namespace

void write_audit(StudyStoreWriter& store, const AuditReport& r) {
  H5::Group a = store.group("audit");
  h5::set_attr(a, "factors", nlohmann::json(r.factors).dump());
  H5::Group rules = h5::create_group(a, "rules");
  std::vector<std::uint32_t> order;
  std::vector<std::string> levels;
  for (std::size_t i = 0; i < r.rules.size(); ++i) {
    order.push_back(static_cast<std::uint32_t>(i + 1));
    levels.emplace_back(to_string(r.rule_levels[i]));
  }
  h5::write_column(rules, "order", order);
  h5::write_strings(rules, "name", r.rules);
  h5::write_strings(rules, "kind", r.rule_kinds);
  h5::write_strings(rules, "level", levels);

  H5::Group counts = h5::create_group(a, "counts");
  std::vector<std::uint32_t> c_rule;
  std::vector<std::string> c_level, c_part, c_cell;
  std::vector<std::uint64_t> c_seq, c_alone, c_mseq, c_malone;
  for (const auto& row : audit_rows(r)) {
    c_rule.push_back(static_cast<std::uint32_t>(row.order));
    c_level.emplace_back(to_string(row.level));
    c_part.push_back(row.participant);
    c_cell.push_back(row.cell);
    c_seq.push_back(row.removed_sequential);
    c_alone.push_back(row.removed_alone);
    c_mseq.push_back(row.merged_sequential);
    c_malone.push_back(row.merged_alone);
  }
  h5::write_column(counts, "rule", c_rule);
  h5::write_strings(counts, "level", c_level);
  h5::write_strings(counts, "participant", c_part);
  write_cells(counts, r.factors, c_cell);
  h5::write_column(counts, "removed_sequential", c_seq);
  h5::write_column(counts, "removed_alone", c_alone);
  h5::write_column(counts, "merged_sequential", c_mseq);
  h5::write_column(counts, "merged_alone", c_malone);

  H5::Group totals = h5::create_group(a, "totals");
  std::vector<std::string> t_part, t_cell, t_level;
  std::vector<std::uint64_t> t_in, t_kept;
  for (const auto& [group, t] : r.totals) {
    for (std::size_t l = 0; l < kAuditLevels; ++l) {
      if (group.second.empty() != (l == static_cast<std::size_t>(AuditLevel::participant))) continue;
      t_part.push_back(group.first);
      t_cell.push_back(group.second);
      t_level.emplace_back(to_string(static_cast<AuditLevel>(l)));
      t_in.push_back(t.input[l]);
      t_kept.push_back(t.kept[l]);
    }
  }
  h5::write_strings(totals, "participant", t_part);
  write_cells(totals, r.factors, t_cell);
  h5::write_strings(totals, "level", t_level);
  h5::write_column(totals, "input", t_in);
  h5::write_column(totals, "kept", t_kept);

  H5::Group overlap = h5::create_group(a, "overlap");
  std::vector<std::string> o_level;
  std::vector<std::uint32_t> o_a, o_b;
  std::vector<std::uint64_t> o_both;
  for (std::size_t l = 1; l < kAuditLevels; ++l) {
    for (std::size_t i = 0; i < r.overlap[l].size(); ++i) {
      for (std::size_t j = 0; j < r.overlap[l][i].size(); ++j) {
        o_level.emplace_back(to_string(static_cast<AuditLevel>(l)));
        o_a.push_back(static_cast<std::uint32_t>(i + 1));
        o_b.push_back(static_cast<std::uint32_t>(j + 1));
        o_both.push_back(r.overlap[l][i][j]);
      }
    }
  }
  h5::write_strings(overlap, "level", o_level);
  h5::write_column(overlap, "rule_a", o_a);
  h5::write_column(overlap, "rule_b", o_b);
  h5::write_column(overlap, "both", o_both);
}

AuditReport read_audit(const StudyStoreReader& store) {
  if (!store.exists("audit")) throw InputError({store.path(), 0, "/audit"}, "the store has no audit yet; run gazemill clean first");
  h5::QuietErrors quiet;
  AuditReport r;
  try {
    H5::Group a = store.group("audit");
    r.factors = nlohmann::json::parse(h5::get_string_attr(a, "factors")).get<std::vector<std::string>>();
    H5::Group rules = a.openGroup("rules");
    r.rules = h5::read_strings(rules, "name");
    r.rule_kinds = h5::read_strings(rules, "kind");
    for (const auto& l : h5::read_strings(rules, "level")) r.rule_levels.push_back(level_named(l));
    H5::Group counts = a.openGroup("counts");
    const auto rule = h5::read_column<std::uint32_t>(counts, "rule");
    const auto level = h5::read_strings(counts, "level");
    const auto part = h5::read_strings(counts, "participant");
    const auto cond = read_cells(counts, r.factors, part.size(), level);
    const auto seq = h5::read_column<std::uint64_t>(counts, "removed_sequential");
    const auto alone = h5::read_column<std::uint64_t>(counts, "removed_alone");
    const auto mseq = h5::read_column<std::uint64_t>(counts, "merged_sequential");
    const auto malone = h5::read_column<std::uint64_t>(counts, "merged_alone");
    for (std::size_t i = 0; i < rule.size(); ++i) {
      const std::size_t l = static_cast<std::size_t>(level_named(level[i]));
      AuditKey key{rule[i] - 1u, part[i], cond[i]};
      auto& s = r.sequential[key];
      auto& al = r.alone[key];
      s.removed[l] = seq[i] - mseq[i];
      al.removed[l] = alone[i] - malone[i];
      if (l == static_cast<std::size_t>(AuditLevel::fixation)) {
        s.merged = mseq[i];
        al.merged = malone[i];
      }
    }
    H5::Group totals = a.openGroup("totals");
    const auto tp = h5::read_strings(totals, "participant");
    const auto tl = h5::read_strings(totals, "level");
    const auto tc = read_cells(totals, r.factors, tp.size(), tl);
    const auto ti = h5::read_column<std::uint64_t>(totals, "input"), tk = h5::read_column<std::uint64_t>(totals, "kept");
    for (std::size_t i = 0; i < tp.size(); ++i) {
      auto& t = r.totals[{tp[i], tc[i]}];
      const std::size_t l = static_cast<std::size_t>(level_named(tl[i]));
      t.input[l] = ti[i];
      t.kept[l] = tk[i];
    }
    H5::Group overlap = a.openGroup("overlap");
    const auto ol = h5::read_strings(overlap, "level");
    const auto oa = h5::read_column<std::uint32_t>(overlap, "rule_a"), ob = h5::read_column<std::uint32_t>(overlap, "rule_b");
    const auto both = h5::read_column<std::uint64_t>(overlap, "both");
    for (auto& m : r.overlap) m.assign(r.rules.size(), std::vector<std::uint64_t>(r.rules.size(), 0));
    for (std::size_t i = 0; i < ol.size(); ++i) r.overlap[static_cast<std::size_t>(level_named(ol[i]))][oa[i] - 1][ob[i] - 1] = both[i];
  } catch (const H5::Exception& e) {
    throw InputError({store.path(), 0, "/audit"}, "damaged or incomplete audit: " + e.getDetailMsg());
  }
  return r;
}

std::vector<CleanFixation> read_clean_fixations(const StudyStoreReader& store, const std::string& rec) {
  const std::string base = "recordings/" + rec + "/clean/fixations";
  if (!store.exists(base)) throw InputError({store.path(), 0, base}, "no cleaned fixations; run gazemill clean first");
  h5::QuietErrors quiet;
  H5::Group f = store.group(base);
  const auto ids = h5::read_column<std::uint32_t>(f, "input_id");
  const auto trial = h5::read_strings(f, "trial");
  const auto start = h5::read_column<std::int64_t>(f, "start_us"), end = h5::read_column<std::int64_t>(f, "end_us");
  const auto dur = h5::read_column<double>(f, "duration_ms");
  const auto x = h5::read_column<double>(f, "x_px"), y = h5::read_column<double>(f, "y_px");
  const auto xd = h5::read_column<double>(f, "x_deg"), yd = h5::read_column<double>(f, "y_deg");
  const auto merged = h5::read_column<std::uint32_t>(f, "merged_count");
  std::vector<CleanFixation> out;
  for (std::size_t i = 0; i < trial.size(); ++i) {
    CleanFixation c;
    c.id = ids[i];
    c.fixation.trial = trial[i];
    c.fixation.start_us = start[i];
    c.fixation.end_us = end[i];
    c.fixation.x_px = c.fixation.x_median_px = x[i];
    c.fixation.y_px = c.fixation.y_median_px = y[i];
    c.fixation.x_deg = xd[i];
    c.fixation.y_deg = yd[i];
    c.duration_ms = dur[i];
    c.merged_count = merged[i];
    out.push_back(c);
  }
  return out;
}

std::vector<RemovedFixation> read_removed_fixations(const StudyStoreReader& store, const std::string& rec) {
  const std::string base = "recordings/" + rec + "/clean/removed_fixations";
  if (!store.exists(base)) throw InputError({store.path(), 0, base}, "no cleaning results; run gazemill clean first");
  h5::QuietErrors quiet;
  H5::Group g = store.group(base);
  const auto ids = h5::read_column<std::uint32_t>(g, "input_id");
  const auto rule = h5::read_strings(g, "rule"), reason = h5::read_strings(g, "reason");
  const auto into = h5::read_column<std::int64_t>(g, "merged_into");
  std::vector<RemovedFixation> out;
  for (std::size_t i = 0; i < ids.size(); ++i) {
    RemovedFixation r{ids[i], rule.at(i), reason.at(i), std::nullopt};
    if (into.at(i) >= 0) r.merged_into = static_cast<std::uint32_t>(into[i]);
    out.push_back(std::move(r));
  }
  return out;
}

std::map<std::string, std::vector<RemovedFixation>> removed_fixations(const CleaningOutcome& out) {
  std::map<std::string, std::vector<RemovedFixation>> by_recording;
  for (const auto& p : out.state.participants) {
    for (const auto& t : p.trials) {
      auto& list = by_recording[t.recording];
      for (const auto& f : t.fixations) {
        if (f.kept) continue;
        const auto& why = out.fixation_removals.at(f.id);
        RemovedFixation r{f.id, out.report.rules[why.first], why.second, std::nullopt};
        if (f.merged_away) r.merged_into = f.merged_into;
        list.push_back(std::move(r));
      }
    }
  }
  return by_recording;
}

std::map<std::string, bool> read_clean_trial_verdicts(const StudyStoreReader& store, const std::string& rec) {
  const std::string base = "recordings/" + rec + "/clean/trials";
  if (!store.exists(base)) throw InputError({store.path(), 0, base}, "no cleaning verdicts; run gazemill clean first");
  h5::QuietErrors quiet;
  H5::Group g = store.group(base);
  const auto trial = h5::read_strings(g, "trial");
  const auto kept = h5::read_column<std::uint8_t>(g, "kept");
  std::map<std::string, bool> out;
  for (std::size_t i = 0; i < trial.size(); ++i) out[trial[i]] = kept[i] != 0;
  return out;
}

std::string audit_tsv(const AuditReport& r) {
  std::string c = "order\trule\tkind\tlevel\tparticipant" + factor_header(r) + "\tremoved_sequential\tremoved_alone\tmerged_sequential\tmerged_alone\n";
  for (const auto& row : audit_rows(r)) {
    c += fmt::format("{}\t{}\t{}\t{}\t{}{}\t{}\t{}\t{}\t{}\n", row.order, row.rule, row.kind, to_string(row.level), row.participant,
                     factor_fields(r, row.cell), row.removed_sequential, row.removed_alone, row.merged_sequential, row.merged_alone);
  }
  return c;
}

std::string audit_totals_tsv(const AuditReport& r) {
  std::string t = "participant" + factor_header(r) + "\tlevel\tinput\tkept\tremoved\n";
  for (const auto& [group, tot] : r.totals) {
    for (std::size_t l = 0; l < kAuditLevels; ++l) {
      if (group.second.empty() != (l == static_cast<std::size_t>(AuditLevel::participant))) continue;
      t += fmt::format("{}{}\t{}\t{}\t{}\t{}\n", group.first, factor_fields(r, group.second), to_string(static_cast<AuditLevel>(l)),
                       tot.input[l], tot.kept[l], tot.input[l] - tot.kept[l]);
    }
  }
  return t;
}

std::string audit_json(const AuditReport& r) {
  nlohmann::json j;
  j["factors"] = r.factors;
  auto cell_json = [&](const std::string& key) {
    if (key.empty()) return nlohmann::json(nullptr);
    nlohmann::json c = nlohmann::json::object();
    const auto levels = cell_levels(key);
    for (std::size_t f = 0; f < r.factors.size(); ++f) {
      const std::string level = f < levels.size() ? levels[f] : std::string();
      c[r.factors[f]] = level.empty() ? nlohmann::json(nullptr) : nlohmann::json(level);
    }
    return c;
  };
  for (std::size_t i = 0; i < r.rules.size(); ++i) {
    j["rules"].push_back({{"order", i + 1}, {"name", r.rules[i]}, {"kind", r.rule_kinds[i]}, {"level", to_string(r.rule_levels[i])}});
  }
  j["counts"] = nlohmann::json::array();
  for (const auto& row : audit_rows(r)) {
    j["counts"].push_back({{"order", row.order},
                           {"rule", row.rule},
                           {"level", to_string(row.level)},
                           {"participant", row.participant},
                           {"cell", cell_json(row.cell)},
                           {"removed_sequential", row.removed_sequential},
                           {"removed_alone", row.removed_alone},
                           {"merged_sequential", row.merged_sequential},
                           {"merged_alone", row.merged_alone}});
  }
  j["totals"] = nlohmann::json::array();
  for (const auto& [group, tot] : r.totals) {
    for (std::size_t l = 0; l < kAuditLevels; ++l) {
      if (group.second.empty() != (l == static_cast<std::size_t>(AuditLevel::participant))) continue;
      j["totals"].push_back({{"participant", group.first},
                             {"cell", cell_json(group.second)},
                             {"level", to_string(static_cast<AuditLevel>(l))},
                             {"input", tot.input[l]},
                             {"kept", tot.kept[l]}});
    }
  }
  for (std::size_t l = 1; l < kAuditLevels; ++l) j["overlap_alone"][to_string(static_cast<AuditLevel>(l))] = r.overlap[l];
  return j.dump(2) + "\n";
}

}  // namespace gazemill
