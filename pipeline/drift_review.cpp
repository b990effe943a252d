#include "pipeline/drift_review.h"

namespace gazemill {

const char* to_string(ReviewDecision d) {
  switch (d) {
    case ReviewDecision::accept: return "accept";
    case ReviewDecision::method: return "method";
    case ReviewDecision::shift_lines: return "shift_lines";
    case ReviewDecision::offset_px: return "offset_px";
    case ReviewDecision::exclude: return "exclude";
  }
  return "?";
}

}  // namespace gazemill
