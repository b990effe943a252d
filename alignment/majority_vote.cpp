#include "alignment/majority_vote.h"

#include <stdexcept>

namespace gazemill {

MajorityVote majority_vote(const std::vector<std::vector<int>>& member_lines) {
  if (member_lines.empty()) throw std::invalid_argument("a majority needs at least one member");
  const std::size_t n = member_lines.front().size();
  for (const auto& m : member_lines) {
    if (m.size() != n) throw std::invalid_argument("majority members disagree on the number of fixations");
  }
  const std::size_t k = member_lines.size();
  MajorityVote out;
  out.line.resize(n);
  out.agreement_share.resize(n);
  double sum = 0;
  for (std::size_t i = 0; i < n; ++i) {
    // Members are few (under a dozen): counting by pairs is cheaper than a map.
    // Walking members in order and replacing only on strictly more votes
    // makes the first-listed member's line win a tie.
    int best_line = member_lines[0][i];
    std::size_t best_votes = 0;
    for (std::size_t a = 0; a < k; ++a) {
      const int l = member_lines[a][i];
      std::size_t votes = 0;
      for (std::size_t b = 0; b < k; ++b) votes += member_lines[b][i] == l ? 1 : 0;
      if (votes > best_votes) {
        best_votes = votes;
        best_line = l;
      }
    }
    out.line[i] = best_line;
    out.agreement_share[i] = static_cast<double>(best_votes) / static_cast<double>(k);
    sum += out.agreement_share[i];
  }
  out.confidence = n == 0 ? 1.0 : sum / static_cast<double>(n);
  return out;
}

MajorityCorrector::MajorityCorrector(std::vector<std::unique_ptr<DriftCorrector>> members) : members_(std::move(members)) {
  if (members_.empty()) throw std::invalid_argument("a majority needs at least one member method");
  for (const auto& m : members_) {
    if (!m) throw std::invalid_argument("a majority member is missing");
  }
}

DriftParameters MajorityCorrector::parameters() const {
  DriftParameters p{{"member_count", static_cast<double>(members_.size())}};
  for (const auto& m : members_) {
    for (const auto& [k, v] : m->parameters()) p[m->name() + "." + k] = v;
  }
  return p;
}

DriftCorrector::Assignment MajorityCorrector::assign(const DriftInput& input) const {
  std::vector<std::vector<int>> lines;
  lines.reserve(members_.size());
  for (const auto& m : members_) lines.push_back(m->correct(input).line);
  MajorityVote vote = majority_vote(lines);
  Assignment a;
  a.method_values["member_count"] = static_cast<double>(members_.size());
  a.method_values["agreement_share"] = vote.confidence;
  const std::vector<double> fit = fixation_confidence(input, vote.line);
  double confidence = 0;
  for (std::size_t i = 0; i < fit.size(); ++i) confidence += vote.agreement_share[i] * fit[i];
  a.method_values["confidence"] = confidence / static_cast<double>(fit.size());
  for (std::size_t k = 0; k < members_.size(); ++k) {
    double same = 0;
    for (std::size_t i = 0; i < vote.line.size(); ++i) same += lines[k][i] == vote.line[i] ? 1 : 0;
    // A method listed twice keeps its first entry's share (they are the same).
    a.method_values.emplace(members_[k]->name() + "_agreement_share", same / static_cast<double>(vote.line.size()));
  }
  a.line = std::move(vote.line);
  return a;
}

DriftOutput MajorityCorrector::finish(const DriftInput& input, Assignment a) const {
  const double confidence = a.method_values.at("confidence");
  DriftOutput out = make_drift_output(input, std::move(a.line), a.method_values);
  out.fit["confidence"] = confidence;
  return out;
}

}  // namespace gazemill
