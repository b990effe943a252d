#include "detectors/median.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>
#include <memory>
#include <utility>

namespace gazemill {
namespace {

// The values of a velocity trace crowd near zero with a long tail, and
// nth_element partitions the whole sample several times over. A histogram
// over the value range finds the bin(s) holding the middle ranks in one pass;
// only those values are kept, and the few left are finished by nth_element.
// Bins are monotone in the value, so ranks carry over exactly.
constexpr std::size_t kBins = 1024;
constexpr std::size_t kSmall = 64;  // below this many candidates, nth_element at once
constexpr int kMaxRounds = 4;       // values spread over many scales narrow slowly: then nth_element

MiddlePair finish(double* first, std::size_t count, std::size_t lower_rank, std::size_t upper_rank) {
  std::nth_element(first, first + lower_rank, first + count);
  MiddlePair m;
  m.lower = first[lower_rank];
  // After nth_element everything beyond lower_rank is >= it: the upper middle is their minimum.
  m.upper = upper_rank == lower_rank ? m.lower : *std::min_element(first + lower_rank + 1, first + count);
  return m;
}

}  // namespace

MiddlePair middle_pair_in_place(std::vector<double>& values) {
  const std::size_t n = values.size();
  double* first = values.data();
  std::size_t count = n;
  std::size_t lower_rank = (n - 1) / 2, upper_rank = n / 2;  // among the current candidates
  std::array<std::uint32_t, kBins> histogram;
  std::unique_ptr<std::uint16_t[]> bins(new std::uint16_t[n]);  // each value's bin (not zeroed: written before read)
  for (int round = 0; round < kMaxRounds && count > kSmall; ++round) {
    double lo = first[0], hi = first[0];
    bool finite = true;
    for (std::size_t i = 0; i < count; ++i) {
      lo = std::min(lo, first[i]);
      hi = std::max(hi, first[i]);
      finite &= std::isfinite(first[i]);
    }
    if (!finite) break;  // NaN or infinity: leave it all to nth_element
    if (lo == hi) return {lo, lo};
    const double scale = static_cast<double>(kBins) / (hi - lo);
    if (!std::isfinite(scale) || scale <= 0.0) break;
    auto bin = [&](double x) { return std::min(kBins - 1, static_cast<std::size_t>((x - lo) * scale)); };
    histogram.fill(0);
    for (std::size_t i = 0; i < count; ++i) ++histogram[bins[i] = static_cast<std::uint16_t>(bin(first[i]))];
    std::size_t below = 0, b = 0;
    while (below + histogram[b] <= lower_rank) below += histogram[b++];
    std::size_t last = b, through = below + histogram[b];
    while (through <= upper_rank) through += histogram[++last];
    const std::size_t kept = through - below;
    if (kept == count) break;  // no narrowing (all in one bin): nth_element decides
    // Kept values to the front by swaps (every value stays in the sample),
    // without a branch: whether a value is kept is a coin toss to the predictor.
    std::size_t w = 0;
    for (std::size_t i = 0; i < count; ++i) {
      const bool keep = bins[i] - b <= last - b;  // b <= bin <= last, unsigned
      const double x = first[i];
      first[i] = first[w];
      first[w] = x;
      w += keep;
    }
    count = kept;
    lower_rank -= below;
    upper_rank -= below;
  }
  return finish(first, count, lower_rank, upper_rank);
}

double median_in_place(std::vector<double>& values) {
  if (values.empty()) return std::nan("");
  const MiddlePair m = middle_pair_in_place(values);
  return values.size() % 2 ? m.upper : 0.5 * (m.upper + m.lower);
}

}  // namespace gazemill
