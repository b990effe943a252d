#include "pipeline/sample_sink.h"

namespace gazemill {
namespace {
template <typename T>
void extend(std::vector<T>& to, const std::vector<T>& from) {
  to.insert(to.end(), from.begin(), from.end());
}
void extend_eye(EyeSamples& to, const EyeSamples& from) {
  extend(to.x_px, from.x_px);
  extend(to.y_px, from.y_px);
  extend(to.pupil, from.pupil);
  extend(to.valid, from.valid);
}
}  // namespace

void CollectingSink::append(const SampleColumns& chunk) {
  samples.has_left = chunk.has_left;
  samples.has_right = chunk.has_right;
  extend(samples.time_us, chunk.time_us);
  if (chunk.has_left) extend_eye(samples.left, chunk.left);
  if (chunk.has_right) extend_eye(samples.right, chunk.right);
}

}  // namespace gazemill
