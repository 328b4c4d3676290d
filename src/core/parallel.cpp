#include "core/parallel.hpp"

#include <algorithm>
#include <atomic>
#include <exception>
#include <thread>
#include <vector>

namespace vzero::detail {

int thread_count(int threads) {
  return threads > 0 ? threads : static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
}

void parallel_for(int n, int threads, int chunk, const std::function<void(int)>& fn) {
  const int t = std::min(thread_count(threads), (n + chunk - 1) / chunk);
  if (t <= 1) {
    for (int i = 0; i < n; ++i) fn(i);
    return;
  }
  std::atomic<int> next{0};
  std::atomic<int> first_failed{n};  // lowest index that failed; later ones are not started
  std::vector<std::exception_ptr> errors(static_cast<std::size_t>(n));
  auto work = [&]() {
    while (true) {
      const int start = next.fetch_add(chunk);
      for (int i = start; i < std::min(n, start + chunk); ++i) {
        if (i > first_failed.load()) return;
        try {
          fn(i);
        } catch (...) {
          errors[static_cast<std::size_t>(i)] = std::current_exception();
          int seen = first_failed.load();
          while (i < seen && !first_failed.compare_exchange_weak(seen, i)) {}
          return;
        }
      }
      if (start >= n) return;
    }
  };
  std::vector<std::thread> pool;
  for (int k = 1; k < t; ++k) pool.emplace_back(work);
  work();
  for (auto& th : pool) th.join();
  if (first_failed.load() < n) std::rethrow_exception(errors[static_cast<std::size_t>(first_failed.load())]);
}

}  // namespace vzero::detail
