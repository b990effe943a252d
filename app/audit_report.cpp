#include "app/audit_report.h"

#include <fmt/format.h>

#include <set>

#include "app/text_table.h"
#include "io/cleaning_io.h"
#include "pipeline/design.h"

namespace gazemill {
namespace {

// A cell's column heading: its levels joined by '/', in the factors' order.
std::string heading(const std::string& key) {
  std::string out;
  for (const auto& l : cell_levels(key)) out += (out.empty() ? "" : "/") + (l.empty() ? std::string("NA") : l);
  return out.empty() ? "all" : out;
}

void print_block(const AuditReport& r, const std::vector<AuditRow>& rows, const std::string& only_participant, std::ostream& out) {
  std::set<std::string> conditions;
  for (const auto& [g, t] : r.totals) {
    if (!g.second.empty()) conditions.insert(g.second);
  }
  if (conditions.size() < 2) conditions.clear();  // one cell: its column would repeat "removed"
  std::array<std::uint64_t, kAuditLevels> input{}, kept{};
  for (const auto& [g, t] : r.totals) {
    if (!only_participant.empty() && g.first != only_participant) continue;
    for (std::size_t l = 0; l < kAuditLevels; ++l) {
      input[l] += t.input[l];
      kept[l] += t.kept[l];
    }
  }
  std::vector<std::string> head = {"#", "rule", "kind", "level", "removed", "alone", "% of input"};
  for (const auto& c : conditions) head.push_back(heading(c));
  std::vector<bool> right(head.size(), true);
  right[1] = right[2] = right[3] = false;
  TextTable t(head, right);
  // Rows summed over participants (or one of them), keyed by rule and level.
  std::map<std::pair<std::size_t, AuditLevel>, std::map<std::string, std::array<std::uint64_t, 2>>> sums;
  for (const auto& row : rows) {
    if (!only_participant.empty() && row.participant != only_participant) continue;
    auto& s = sums[{row.order, row.level}];
    s[""][0] += row.removed_sequential;
    s[""][1] += row.removed_alone;
    if (!row.cell.empty()) s[row.cell][0] += row.removed_sequential;
  }
  for (const auto& [key, s] : sums) {
    const auto& [order, level] = key;
    const std::size_t l = static_cast<std::size_t>(level);
    const auto all = s.at("");
    std::vector<std::string> cells = {std::to_string(order), r.rules[order - 1], r.rule_kinds[order - 1], to_string(level),
                                      std::to_string(all[0]), std::to_string(all[1]),
                                      input[l] ? fmt::format("{:.1f}", 100.0 * static_cast<double>(all[0]) / static_cast<double>(input[l])) : "-"};
    for (const auto& c : conditions) {
      auto it = s.find(c);
      cells.push_back(level == AuditLevel::participant ? "-" : std::to_string(it == s.end() ? 0 : it->second[0]));
    }
    t.add_row(cells);
  }
  t.print(out);
  out << '\n';
  TextTable totals({"level", "input", "kept", "removed"}, {false, true, true, true});
  for (std::size_t l = 0; l < kAuditLevels; ++l) {
    totals.add_row({to_string(static_cast<AuditLevel>(l)), std::to_string(input[l]), std::to_string(kept[l]), std::to_string(input[l] - kept[l])});
  }
  totals.print(out);
}

}  // namespace

void print_audit(const AuditReport& r, bool by_participant, std::ostream& out) {
  const auto rows = audit_rows(r);
  if (!r.factors.empty()) {
    std::string f;
    for (const auto& x : r.factors) f += (f.empty() ? "" : "/") + x;
    out << "design cells (" << f << ") as columns: removed by the rule in protocol order, per cell.\n";
  }
  out << "removed: by the rule in protocol order (the first rule to remove an item has it); "
         "alone: by the rule applied alone to the input; merged fixations count as removed.\n\n";
  if (!by_participant) {
    print_block(r, rows, "", out);
    return;
  }
  std::set<std::string> participants;
  for (const auto& [g, t] : r.totals) participants.insert(g.first);
  for (const auto& p : participants) {
    out << "participant " << p << "\n";
    print_block(r, rows, p, out);
    out << '\n';
  }
}

}  // namespace gazemill
