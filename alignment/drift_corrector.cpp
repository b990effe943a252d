#include "alignment/drift_corrector.h"

namespace gazemill {

DriftOutput DriftCorrector::correct(const DriftInput& input) const {
  validate(input);
  if (input.fixations.empty()) return make_drift_output(input, {});
  return finish(input, assign(input));
}

DriftOutput DriftCorrector::finish(const DriftInput& input, Assignment a) const {
  return make_drift_output(input, std::move(a.line), a.method_values);
}

std::vector<int> nearest_lines(const DriftInput& input) {
  std::vector<int> line;
  line.reserve(input.fixations.size());
  for (const auto& f : input.fixations) line.push_back(nearest_line(input.text.line_y_px, f.y_px));
  return line;
}

}  // namespace gazemill
