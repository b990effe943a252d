#include "pipeline/recording.h"

namespace gazemill {

std::string to_string(Eye eye) { return eye == Eye::left ? "left" : "right"; }

void EyeSamples::reserve(std::size_t n) {
  x_px.reserve(n);
  y_px.reserve(n);
  pupil.reserve(n);
  valid.reserve(n);
}

void EyeSamples::clear() {
  x_px.clear();
  y_px.clear();
  pupil.clear();
  valid.clear();
}

void SampleColumns::reserve(std::size_t n) {
  time_us.reserve(n);
  if (has_left) left.reserve(n);
  if (has_right) right.reserve(n);
}

const std::string& Trial::variable(const std::string& name) const {
  static const std::string none;
  const auto it = variables.find(name);
  return it == variables.end() ? none : it->second;
}

void SampleColumns::clear() {
  time_us.clear();
  left.clear();
  right.clear();
}

}  // namespace gazemill
