#pragma once
// Work on each of `count` recordings, `threads` at a time (0: one per core):
// work(k) for every k, each on some thread; when all are done, the error of
// the first recording (in study order) that failed is thrown. Results that
// the caller keeps by k are therefore the same for any number of threads.

#include <algorithm>
#include <atomic>
#include <cstddef>
#include <exception>
#include <thread>
#include <vector>

namespace gazemill {

template <typename Work>
void for_each_recording(std::size_t count, unsigned threads, Work&& work) {
  std::vector<std::exception_ptr> errors(count);
  std::atomic<std::size_t> next{0};
  auto worker = [&] {
    for (std::size_t k; (k = next++) < count;) {
      try {
        work(k);
      } catch (...) {
        errors[k] = std::current_exception();
      }
    }
  };
  const std::size_t workers = std::min<std::size_t>(std::max(1u, threads ? threads : std::thread::hardware_concurrency()), count);
  std::vector<std::thread> pool;
  for (std::size_t t = 1; t < workers; ++t) pool.emplace_back(worker);
  worker();
  for (auto& t : pool) t.join();
  for (auto& e : errors) {
    if (e) std::rethrow_exception(e);
  }
}

}  // namespace gazemill
