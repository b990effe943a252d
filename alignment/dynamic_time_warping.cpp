#include "alignment/dynamic_time_warping.h"

namespace gazemill {

WarpingPath dynamic_time_warping(std::size_t n, std::size_t m, const std::function<double(std::size_t, std::size_t)>& local_cost,
                                 bool want_path) {
  return dynamic_time_warping<std::function<double(std::size_t, std::size_t)>>(n, m, local_cost, want_path);
}

}  // namespace gazemill
