#include "io/review_file.h"

#include <cmath>
#include <set>
#include <tuple>

#include "io/tsv_table.h"
#include "pipeline/input_error.h"

namespace gazemill {

std::vector<TrialReview> read_review_file(const std::string& path) {
  TsvTable t(path);
  std::vector<TrialReview> out;
  std::set<std::tuple<std::string, std::string, std::string>> seen;
  for (std::size_t r = 0; r < t.rows(); ++r) {
    TrialReview v;
    v.line = t.line_of(r);
    v.participant = t.text(r, "participant");
    v.session = t.text_or(r, "session", "");
    v.trial = t.text(r, "trial");
    const std::string d = t.text(r, "decision");
    v.value = t.text_or(r, "value", "");
    v.reason = t.text(r, "reason");
    v.reviewer = t.text_or(r, "reviewer", "");
    if (v.reason.empty()) throw InputError({path, v.line, "reason"}, "every decision needs its reason, for whoever reads the study later");
    if (d == "accept") v.decision = ReviewDecision::accept;
    else if (d == "method") v.decision = ReviewDecision::method;
    else if (d == "shift_lines") v.decision = ReviewDecision::shift_lines;
    else if (d == "offset_px") v.decision = ReviewDecision::offset_px;
    else if (d == "exclude") v.decision = ReviewDecision::exclude;
    else throw InputError({path, v.line, "decision"}, "expected accept, method, shift_lines, offset_px or exclude, found \"" + d + "\"");
    if (v.decision == ReviewDecision::method && v.value.empty()) throw InputError({path, v.line, "value"}, "method needs the method's name");
    if (v.decision == ReviewDecision::shift_lines || v.decision == ReviewDecision::offset_px) {
      v.number = t.number(r, "value");
      if (v.decision == ReviewDecision::shift_lines && v.number != std::floor(v.number)) {
        throw InputError({path, v.line, "value"}, "shift_lines moves by whole lines, e.g. -1 or 1");
      }
    }
    if (!seen.insert({v.participant, v.session, v.trial}).second) {
      throw InputError({path, v.line, "trial"}, "participant " + v.participant + (v.session.empty() ? "" : ", session " + v.session) + ", trial " +
                                                    v.trial + " is reviewed twice");
    }
    out.push_back(std::move(v));
  }
  return out;
}

}  // namespace gazemill
