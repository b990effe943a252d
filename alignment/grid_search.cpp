#include "alignment/grid_search.h"

namespace gazemill {

SearchResult minimise_on_grid(const std::function<double(double, double)>& f, SearchRange a, SearchRange b, int starts) {
  return minimise_on_grid<std::function<double(double, double)>>(f, a, b, starts);
}

}  // namespace gazemill
