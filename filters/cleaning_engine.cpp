#include "filters/cleaning_engine.h"

#include <algorithm>
#include <utility>

namespace gazemill {
namespace {

// Input or kept items per (participant, design cell); whole participants under cell "".
std::map<std::pair<std::string, std::string>, std::array<std::uint64_t, kAuditLevels>> count(const CleaningState& s, bool kept_only) {
  std::map<std::pair<std::string, std::string>, std::array<std::uint64_t, kAuditLevels>> out;
  for (const auto& p : s.participants) {
    out[{p.participant, ""}][static_cast<std::size_t>(AuditLevel::participant)] += !kept_only || p.kept;
    for (const auto& t : p.trials) {
      auto& c = out[{p.participant, t.cell}];
      const bool trial_kept = !kept_only || t.kept;
      c[static_cast<std::size_t>(AuditLevel::trial)] += trial_kept;
      c[static_cast<std::size_t>(AuditLevel::sample)] += trial_kept ? t.samples : 0;
      for (const auto& f : t.fixations) c[static_cast<std::size_t>(AuditLevel::fixation)] += !kept_only || f.kept;
    }
  }
  return out;
}

// A rule's failure names the rule.
void apply(const CleaningRule& rule, CleaningState& state, std::size_t index, AuditChannel& channel) {
  try {
    rule.apply(state, index, channel);
  } catch (const RuleApplyError&) {
    throw;
  } catch (const std::invalid_argument& e) {
    throw RuleApplyError(index, e.what());
  }
}

}  // namespace

CleaningOutcome run_cleaning(CleaningState input, const std::vector<CleaningRuleSpec>& specs) {
  std::vector<std::unique_ptr<CleaningRule>> rules;
  CleaningOutcome out;
  out.report.factors = input.factors;
  std::vector<std::string> names;
  for (const auto& s : specs) {
    rules.push_back(make_cleaning_rule(s));
    names.push_back(s.name);
    out.report.rules.push_back(s.name);
    out.report.rule_kinds.push_back(s.kind);
    out.report.rule_levels.push_back(rules.back()->level());
  }

  const auto in = count(input, false);  // before the input itself is handed to a rule below
  // Sequential: the rules in order on one state; the first to remove an item
  // has it. With one rule nothing else needs the input: it becomes that state.
  if (rules.size() <= 1) {
    out.state = std::move(input);
  } else {
    out.state = input;
  }
  AuditLedger ledger(names);
  AuditChannel channel;
  std::map<std::uint32_t, std::pair<std::size_t, std::string>>* fix_log = &out.fixation_removals;
  std::map<std::uint32_t, std::pair<std::size_t, std::string>>* trial_log = &out.trial_removals;
  {
    auto connection = ledger.subscribe(channel);
    auto log = channel.notice.connect([&](const AuditNotice& n) {
      if (n.level == AuditLevel::fixation) {
        for (auto id : n.ids) fix_log->emplace(id, std::make_pair(n.rule, n.reason));
      } else if (n.level == AuditLevel::trial) {
        for (auto id : n.ids) trial_log->emplace(id, std::make_pair(n.rule, n.reason));
      }
    });
    for (std::size_t r = 0; r < rules.size(); ++r) apply(*rules[r], out.state, r, channel);
    log.disconnect();
  }
  out.report.sequential = ledger.counts();

  // Alone: each rule on its own copy of the input. The first rule met the
  // input itself in the sequential pass: what it removed there is what it
  // removes alone, so its records are taken from there (one copy of the
  // whole study fewer); the last rule alone is given the input itself.
  std::vector<AuditLedger> alone;
  alone.reserve(rules.size());
  std::vector<const AuditLedger*> alone_of;
  for (std::size_t r = 0; r < rules.size(); ++r) {
    if (r == 0) {
      for (const auto& [key, c] : ledger.counts()) {
        if (key.rule == 0) out.report.alone[key] = c;
      }
      alone_of.push_back(&ledger);
      continue;
    }
    CleaningState copy = r + 1 == rules.size() ? std::move(input) : input;
    alone.emplace_back(names);
    AuditChannel ch;
    auto connection = alone.back().subscribe(ch);
    apply(*rules[r], copy, r, ch);
    for (const auto& [key, c] : alone.back().counts()) out.report.alone[key] = c;
    alone_of.push_back(&alone.back());
  }
  for (std::size_t level = 1; level < kAuditLevels; ++level) {  // samples are counted, not identified
    auto& m = out.report.overlap[level];
    m.assign(rules.size(), std::vector<std::uint64_t>(rules.size(), 0));
    for (std::size_t a = 0; a < rules.size(); ++a) {
      const auto& ia = alone_of[a]->ids(a, static_cast<AuditLevel>(level));
      for (std::size_t b = 0; b < rules.size(); ++b) {
        const auto& ib = alone_of[b]->ids(b, static_cast<AuditLevel>(level));
        std::uint64_t both = 0;
        for (auto id : ia) both += ib.count(id);
        m[a][b] = both;
      }
    }
  }
  out.report.overlap[0].assign(rules.size(), std::vector<std::uint64_t>(rules.size(), 0));

  // Every rule x participant x cell row exists, zero when nothing happened.
  const auto kept = count(out.state, true);
  for (const auto& [group, c] : in) {
    AuditTotals& t = out.report.totals[group];
    t.input = c;
    t.kept = kept.at(group);
    for (std::size_t r = 0; r < rules.size(); ++r) {
      out.report.sequential[{r, group.first, group.second}];
      out.report.alone[{r, group.first, group.second}];
    }
  }
  out.report.check_conservation();
  return out;
}

AuditReport run_cleaning_by_participant(const std::function<bool(CleaningState&)>& next, const std::vector<CleaningRuleSpec>& rules,
                                        const std::vector<std::string>& factors, const std::function<void(CleaningOutcome&&)>& each) {
  CleaningState none;
  none.factors = factors;
  AuditReport study = run_cleaning(std::move(none), rules).report;
  for (CleaningState one; (one = CleaningState{}, next(one));) {
    CleaningOutcome part = run_cleaning(std::move(one), rules);
    study.add(part.report);
    each(std::move(part));
  }
  return study;
}

}  // namespace gazemill
