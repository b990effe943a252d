#include "pipeline/sample_sink.h"

#include <limits>

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

ScreenMarginSink::ScreenMarginSink(SampleSink& next, int width_px, int height_px, double margin_px)
    : next_(next), min_x_(-margin_px), max_x_(width_px + margin_px), min_y_(-margin_px), max_y_(height_px + margin_px) {}

bool ScreenMarginSink::outside(float x, float y) const { return x < min_x_ || x > max_x_ || y < min_y_ || y > max_y_; }

void ScreenMarginSink::append(const SampleColumns& chunk) {
  // Copied only when a sample is off the screen: most chunks have none.
  const auto any_outside = [&](const EyeSamples& e) {
    for (std::size_t i = 0; i < e.x_px.size(); ++i) {
      if (e.valid[i] && outside(e.x_px[i], e.y_px[i])) return true;
    }
    return false;
  };
  if (!(chunk.has_left && any_outside(chunk.left)) && !(chunk.has_right && any_outside(chunk.right))) {
    next_.append(chunk);
    return;
  }
  copy_ = chunk;
  const auto clear = [&](EyeSamples& e, std::uint64_t& count) {
    for (std::size_t i = 0; i < e.x_px.size(); ++i) {
      if (!e.valid[i] || !outside(e.x_px[i], e.y_px[i])) continue;
      e.x_px[i] = e.y_px[i] = std::numeric_limits<float>::quiet_NaN();
      e.valid[i] = 0;
      ++count;
    }
  };
  if (copy_.has_left) clear(copy_.left, offscreen_left);
  if (copy_.has_right) clear(copy_.right, offscreen_right);
  next_.append(copy_);
}

void ZeroGazeCountingSink::append(const SampleColumns& chunk) {
  const auto count = [&](const EyeSamples& e) {
    std::uint64_t n = 0;
    for (std::size_t i = 0; i < e.x_px.size(); ++i) n += (e.valid[i] != 0) & (e.x_px[i] == 0.0f) & (e.y_px[i] == 0.0f);
    return n;
  };
  if (chunk.has_left) zero_gaze += count(chunk.left);
  if (chunk.has_right) zero_gaze += count(chunk.right);
  samples += chunk.size();
  next_.append(chunk);
}

}  // namespace gazemill
