#pragma once
// A person's decisions on trials drift correction was unsure of: a review
// file named in the protocol ([alignment] review_file) that the align stage
// applies on every run, so hand corrections stay on the reproducible path.

#include <cstddef>
#include <string>

namespace gazemill {

enum class ReviewDecision {
  accept,       // keep the method's lines; the trial is no longer flagged
  method,       // align this trial with another method (value: its name)
  shift_lines,  // move every fixation of the trial by whole lines (value: +1 = one line down)
  offset_px,    // subtract a vertical offset from every fixation, then take the nearest line (value: px)
  exclude,      // leave the trial out of the measures
};
const char* to_string(ReviewDecision d);

struct TrialReview {
  std::string participant;
  std::string session;  // optional: "" = the participant's only recording with this trial
  std::string trial;
  ReviewDecision decision = ReviewDecision::accept;
  std::string value;     // as written (method name or number)
  double number = 0;     // shift_lines, offset_px
  std::string reason;    // required: why the reviewer decided so
  std::string reviewer;  // optional
  std::size_t line = 0;  // in the review file
};

}  // namespace gazemill
