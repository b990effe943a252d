#include "pipeline/audit.h"

#include <stdexcept>

#include "pipeline/design.h"

namespace gazemill {

const char* to_string(AuditLevel level) {
  switch (level) {
    case AuditLevel::sample: return "sample";
    case AuditLevel::fixation: return "fixation";
    case AuditLevel::trial: return "trial";
    case AuditLevel::participant: return "participant";
  }
  return "?";
}

void AuditLedger::record(const AuditNotice& n) {
  AuditCounts& c = counts_[{n.rule, n.participant, n.cell}];
  if (n.merge) {
    c.merged += n.count;
    for (auto id : n.ids) merges_[n.rule].emplace_back(id, n.into_id);
  } else {
    c.removed[static_cast<std::size_t>(n.level)] += n.count;
  }
  auto& set = ids_[{n.rule, n.level}];
  set.insert(n.ids.begin(), n.ids.end());
}

boost::signals2::scoped_connection AuditLedger::subscribe(AuditChannel& channel) {
  return channel.notice.connect([this](const AuditNotice& n) { record(n); });
}

const std::set<std::uint32_t>& AuditLedger::ids(std::size_t rule, AuditLevel level) const {
  static const std::set<std::uint32_t> none;
  auto it = ids_.find({rule, level});
  return it == ids_.end() ? none : it->second;
}

const std::vector<std::pair<std::uint32_t, std::uint32_t>>& AuditLedger::merges(std::size_t rule) const {
  static const std::vector<std::pair<std::uint32_t, std::uint32_t>> none;
  auto it = merges_.find(rule);
  return it == merges_.end() ? none : it->second;
}

void AuditReport::check_conservation() const {
  for (const auto& [group, t] : totals) {
    for (std::size_t level = 0; level < kAuditLevels; ++level) {
      std::uint64_t removed = 0;
      for (const auto& [key, c] : sequential) {
        if (key.participant != group.first || key.cell != group.second) continue;
        removed += c.removed[level];
        if (level == static_cast<std::size_t>(AuditLevel::fixation)) removed += c.merged;
      }
      if (t.input[level] != t.kept[level] + removed) {
        throw std::logic_error(std::string("audit does not balance at the ") + to_string(static_cast<AuditLevel>(level)) +
                               " level for participant " + group.first + ", " + (group.second.empty() ? std::string("as a whole") : cell_text(factors, group.second)) + ": input " +
                               std::to_string(t.input[level]) + " != kept " + std::to_string(t.kept[level]) + " + removed " +
                               std::to_string(removed));
      }
    }
  }
}

void AuditReport::add(const AuditReport& other) {
  if (other.rules != rules || other.rule_levels != rule_levels || other.factors != factors) {
    throw std::logic_error("audit: reports of different rules cannot be added");
  }
  auto join = [](auto& into, const auto& from) {
    for (const auto& [key, value] : from) {
      if (!into.emplace(key, value).second) throw std::logic_error("audit: a participant's row is in both reports");
    }
  };
  join(totals, other.totals);
  join(sequential, other.sequential);
  join(alone, other.alone);
  for (std::size_t level = 0; level < kAuditLevels; ++level) {
    auto& m = overlap[level];
    const auto& o = other.overlap[level];
    if (m.empty()) {
      m = o;
      continue;
    }
    for (std::size_t a = 0; a < m.size() && a < o.size(); ++a) {
      for (std::size_t b = 0; b < m[a].size() && b < o[a].size(); ++b) m[a][b] += o[a][b];
    }
  }
}

}  // namespace gazemill
