#pragma once
// How well drift correction puts fixations on their true lines, scored on a
// simulated study: every method on the same cleaned fixations, each detected
// fixation matched to the true fixation it overlaps most, the share on their
// true line overall, by block and by the trial's largest distortion.

#include <map>
#include <ostream>
#include <string>
#include <vector>

namespace gazemill {

struct LineScore {
  std::string method;
  // By group ("all", "sentence", "passage", "largest: offset", ...): fixations right and matched.
  std::map<std::string, std::pair<std::uint64_t, std::uint64_t>> right_of;
};

/// Scores every method named (all of them when `methods` is empty) on the
/// simulated study in `folder` read with `protocol_path` ("" = the folder's gazemill.toml).
std::vector<LineScore> score_lines(const std::string& folder, const std::string& protocol_path, const std::vector<std::string>& methods);

void print_line_scores(const std::vector<LineScore>& scores, std::ostream& out);
std::string line_scores_json(const std::vector<LineScore>& scores);

}  // namespace gazemill
