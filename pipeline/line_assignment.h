#pragma once
// What drift correction decided: the text line of every kept fixation, with
// a corrected vertical position, and per trial how sure the method was.

#include <cstdint>
#include <map>
#include <string>
#include <vector>

namespace gazemill {

struct LineAssignment {
  int line = -1;                 // 0-based; -1: on no line (off the text)
  double corrected_y_px = 0;     // the line's centre; NaN when on no line
};

struct AlignedTrial {
  std::string trial;
  std::string method;
  double confidence = 0;         // 0..1, as the method defines it
  bool flagged = false;          // confidence below the protocol's threshold
  std::map<std::string, double> fit;  // the method's fit summary, units in the names
  std::string review;            // a reviewer's decision applied to it ("" = none), with its reason
  bool excluded = false;         // a reviewer left it out of the measures
};

struct RecordingAlignment {
  std::string recording;
  std::map<std::uint32_t, LineAssignment> fixations;  // by the fixation's input id
  std::vector<AlignedTrial> trials;
};

}  // namespace gazemill
