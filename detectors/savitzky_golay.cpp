#include "detectors/savitzky_golay.h"

#include <Eigen/Dense>
#include <array>
#include <cmath>
#include <map>
#include <stdexcept>
#include <string>

namespace gazemill {

std::vector<double> savitzky_golay_coefficients(int window, int order, int derivative) {
  return savitzky_golay_coefficients_at(window, order, derivative, 0);
}

std::vector<double> savitzky_golay_coefficients_at(int window, int order, int derivative, int position) {
  if (window < 3 || window % 2 == 0) throw std::invalid_argument("Savitzky-Golay window must be odd and at least 3, got " + std::to_string(window));
  if (order < 1 || order >= window) throw std::invalid_argument("Savitzky-Golay order must be at least 1 and below the window length");
  if (derivative < 0 || derivative > order) throw std::invalid_argument("Savitzky-Golay derivative must be between 0 and the order");
  const int h = window / 2;
  if (position < -h || position > h) throw std::invalid_argument("Savitzky-Golay position must lie inside the window");
  // Vandermonde matrix of offsets -h..h; the pseudo-inverse's row d gives the
  // d-th polynomial coefficient at offset 0, times d! for the derivative.
  Eigen::MatrixXd A(window, order + 1);
  for (int i = 0; i < window; ++i) {
    double p = 1.0;
    for (int j = 0; j <= order; ++j) {
      A(i, j) = p;
      p *= static_cast<double>(i - h);
    }
  }
  const Eigen::MatrixXd pinv = (A.transpose() * A).ldlt().solve(A.transpose());
  // d^k/dx^k of sum_j a_j x^j at x = position: sum_{j>=k} a_j j!/(j-k)! position^(j-k).
  std::vector<double> c(static_cast<std::size_t>(window), 0.0);
  for (int j = derivative; j <= order; ++j) {
    double falling = 1.0;
    for (int q = 0; q < derivative; ++q) falling *= j - q;
    const double scale = falling * std::pow(static_cast<double>(position), j - derivative);
    for (int i = 0; i < window; ++i) c[static_cast<std::size_t>(i)] += pinv(j, i) * scale;
  }
  return c;
}

const std::vector<double>& savitzky_golay_coefficients_cached(int window, int order, int derivative, int position) {
  // One small map per thread: no locks, and a few dozen entries at most
  // (the windows of the rates in use x edge positions).
  thread_local std::map<std::array<int, 4>, std::vector<double>> cache;
  const std::array<int, 4> key{window, order, derivative, position};
  auto it = cache.find(key);
  if (it == cache.end()) it = cache.emplace(key, savitzky_golay_coefficients_at(window, order, derivative, position)).first;
  return it->second;
}

std::vector<double> savitzky_golay_smooth(const std::vector<double>& values, const std::vector<bool>& usable,
                                          const std::vector<bool>& gap_before, int window, int order) {
  const std::size_t n = values.size(), w = static_cast<std::size_t>(window), h = w / 2;
  const std::vector<double>& centre = savitzky_golay_coefficients_cached(window, order, 0, 0);
  // Off-centre fits for the first and last h samples of a stretch.
  std::vector<const std::vector<double>*> edge(w);
  for (std::size_t pos = 0; pos < w; ++pos) {
    edge[pos] = &savitzky_golay_coefficients_cached(window, order, 0, static_cast<int>(pos) - static_cast<int>(h));
  }
  std::vector<double> out = values;
  const auto fit = [&](const std::vector<double>& c, std::size_t first) {
    double sum = 0;
    for (std::size_t k = 0; k < w; ++k) sum += c[k] * values[first + k];
    return sum;
  };
  std::size_t start = 0;
  while (start < n) {
    if (!usable[start]) {
      ++start;
      continue;
    }
    std::size_t end = start + 1;
    while (end < n && usable[end] && !(end < gap_before.size() && gap_before[end])) ++end;
    if (end - start >= w) {  // a shorter stretch keeps its own values
      for (std::size_t i = start; i < end; ++i) {
        if (i < start + h) out[i] = fit(*edge[i - start], start);
        else if (i + h >= end) out[i] = fit(*edge[w - (end - i)], end - w);
        else out[i] = fit(centre, i - h);
      }
    }
    start = end;
  }
  return out;
}

}  // namespace gazemill
