#include "alignment/grid_search.h"

#include <algorithm>
#include <array>
#include <vector>

namespace gazemill {

SearchResult minimise_on_grid(const std::function<double(double, double)>& f, SearchRange a, SearchRange b, int starts) {
  const int na = std::max(1, a.steps), nb = std::max(1, b.steps);
  const double da = (a.high - a.low) / na, db = (b.high - b.low) / nb;
  std::vector<SearchResult> grid;
  grid.reserve(static_cast<std::size_t>((na + 1) * (nb + 1)));
  for (int i = 0; i <= na; ++i) {
    for (int j = 0; j <= nb; ++j) {
      const double pa = a.low + da * i, pb = b.low + db * j;
      grid.push_back({pa, pb, f(pa, pb)});
    }
  }
  std::stable_sort(grid.begin(), grid.end(), [](const SearchResult& x, const SearchResult& y) { return x.value < y.value; });
  SearchResult best = grid.front();
  const int n_starts = std::min<int>(std::max(1, starts), static_cast<int>(grid.size()));
  for (int s = 0; s < n_starts; ++s) {
    SearchResult cur = grid[static_cast<std::size_t>(s)];
    double sa = da / 2, sb = db / 2;
    while (sa > da / 64 || sb > db / 64) {
      bool moved = false;
      const std::array<std::array<double, 2>, 4> moves{{{sa, 0}, {-sa, 0}, {0, sb}, {0, -sb}}};
      for (const auto& mv : moves) {
        const double pa = std::clamp(cur.a + mv[0], std::min(a.low, a.high), std::max(a.low, a.high));
        const double pb = std::clamp(cur.b + mv[1], std::min(b.low, b.high), std::max(b.low, b.high));
        const double v = f(pa, pb);
        if (v < cur.value) {
          cur = {pa, pb, v};
          moved = true;
          break;
        }
      }
      if (!moved) {
        sa /= 2;
        sb /= 2;
      }
    }
    if (cur.value < best.value) best = cur;
  }
  return best;
}

}  // namespace gazemill
