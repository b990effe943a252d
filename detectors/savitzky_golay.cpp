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

const std::vector<std::vector<double>>& savitzky_golay_table(int window, int order, int derivative) {
  // One small map per thread (no locks; a few entries: the windows of the
  // rates in use), and the last table asked for at hand, as the same window
  // is asked for trace after trace and saccade after saccade.
  using Key = std::array<int, 3>;
  thread_local std::map<Key, std::vector<std::vector<double>>> cache;
  thread_local const Key* last_key = nullptr;
  thread_local const std::vector<std::vector<double>>* last = nullptr;
  const Key key{window, order, derivative};
  if (last_key && *last_key == key) return *last;
  auto it = cache.find(key);
  if (it == cache.end()) {
    std::vector<std::vector<double>> table;
    for (int pos = -(window / 2); pos <= window / 2; ++pos) table.push_back(savitzky_golay_coefficients_at(window, order, derivative, pos));
    it = cache.emplace(key, std::move(table)).first;
  }
  last_key = &it->first;
  last = &it->second;
  return *last;
}

std::vector<double> savitzky_golay_smooth(const std::vector<double>& values, const std::vector<bool>& usable,
                                          const std::vector<bool>& gap_before, int window, int order) {
  const std::size_t n = values.size(), w = static_cast<std::size_t>(window), h = w / 2;
  // Off-centre fits for the first and last h samples of a stretch.
  const std::vector<std::vector<double>>& edge = savitzky_golay_table(window, order, 0);
  const std::vector<double>& centre = edge[h];
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
        if (i < start + h) out[i] = fit(edge[i - start], start);
        else if (i + h >= end) out[i] = fit(edge[w - (end - i)], end - w);
        else out[i] = fit(centre, i - h);
      }
    }
    start = end;
  }
  return out;
}

}  // namespace gazemill
