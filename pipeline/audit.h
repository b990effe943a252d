#pragma once
// The audit ledger: every cleaning rule reports what it removed or merged
// through a Boost.Signals2 signal, never by printing; the ledger subscribes
// and accounts for every sample, fixation, trial and participant.

#include <boost/signals2/signal.hpp>

#include <array>
#include <cstdint>
#include <map>
#include <set>
#include <string>
#include <vector>

namespace gazemill {

enum class AuditLevel { sample = 0, fixation = 1, trial = 2, participant = 3 };
inline constexpr std::size_t kAuditLevels = 4;
const char* to_string(AuditLevel level);

/// One thing a rule did: removed `count` items of `level` (with their ids,
/// except samples, which are counted), or merged fixation `id` into `into_id`.
struct AuditNotice {
  std::size_t rule = 0;          // index in the protocol's rule list
  AuditLevel level = AuditLevel::fixation;
  std::string participant;
  std::string cell;  // the trial's design cell (cell_key); "" for a whole participant
  std::string trial;
  std::uint64_t count = 0;
  std::vector<std::uint32_t> ids;  // removed fixations, trials or participants
  bool merge = false;              // fixations merged away rather than deleted
  std::uint32_t into_id = 0;       // for a merge: the fixation it joined
  std::string reason;
};

/// The channel rules report on; the engine connects the ledger to it.
struct AuditChannel {
  boost::signals2::signal<void(const AuditNotice&)> notice;
};

/// Counts by rule, participant and design cell.
struct AuditKey {
  std::size_t rule;
  std::string participant;
  std::string cell;
  bool operator<(const AuditKey& o) const {
    return std::tie(rule, participant, cell) < std::tie(o.rule, o.participant, o.cell);
  }
};

struct AuditCounts {
  std::array<std::uint64_t, kAuditLevels> removed{};  // fixations merged away count in `merged`, not here
  std::uint64_t merged = 0;
};

/// The input and what is left, per level, per participant and design cell.
struct AuditTotals {
  std::array<std::uint64_t, kAuditLevels> input{};
  std::array<std::uint64_t, kAuditLevels> kept{};
};

class AuditLedger {
 public:
  explicit AuditLedger(std::vector<std::string> rule_names) : rules_(std::move(rule_names)) {}
  void record(const AuditNotice& n);
  /// Connects record() to the channel for as long as the returned connection lives.
  boost::signals2::scoped_connection subscribe(AuditChannel& channel);

  const std::vector<std::string>& rules() const { return rules_; }
  const std::map<AuditKey, AuditCounts>& counts() const { return counts_; }
  /// Ids removed (or merged away) by each rule, per level.
  const std::set<std::uint32_t>& ids(std::size_t rule, AuditLevel level) const;
  const std::vector<std::pair<std::uint32_t, std::uint32_t>>& merges(std::size_t rule) const;

 private:
  std::vector<std::string> rules_;
  std::map<AuditKey, AuditCounts> counts_;
  std::map<std::pair<std::size_t, AuditLevel>, std::set<std::uint32_t>> ids_;
  std::map<std::size_t, std::vector<std::pair<std::uint32_t, std::uint32_t>>> merges_;
};

/// The complete account of one cleaning run.
struct AuditReport {
  std::vector<std::string> rules;
  std::vector<std::string> rule_kinds;
  std::vector<AuditLevel> rule_levels;
  std::vector<std::string> factors;  // the design's factors, naming the levels of each cell key
  // Per (participant, cell): input and kept per level; whole participants under cell "".
  std::map<std::pair<std::string, std::string>, AuditTotals> totals;
  // Sequential attribution: the rule that removed an item first, in protocol order.
  std::map<AuditKey, AuditCounts> sequential;
  // Each rule applied alone to the input.
  std::map<AuditKey, AuditCounts> alone;
  // Items that both rules would remove when each is applied alone: [level][a][b].
  std::array<std::vector<std::vector<std::uint64_t>>, kAuditLevels> overlap;
  /// Throws std::logic_error naming the level and group when input != kept + removed.
  void check_conservation() const;
  /// Adds the report of other participants cleaned by the same rules: their
  /// rows join these, their overlap counts add to these. Throws
  /// std::logic_error when the rules differ or a row is here already.
  void add(const AuditReport& other);
};

}  // namespace gazemill
