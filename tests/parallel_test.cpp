// The one thread pool (src/core/parallel.hpp): every index runs once, whatever the thread
// count and chunk, and the error that comes out is the one a serial loop would throw (the
// lowest failing index), so a batch or a plate fails the same way on any machine.
#include <atomic>
#include <stdexcept>
#include <string>
#include <vector>

#include "core/parallel.hpp"
#include "test_support.hpp"

TEST_CASE("parallel_for runs each index exactly once for any thread count and chunk") {
  for (int threads : {1, 2, 3, 8})
    for (int chunk : {1, 16}) {
      std::vector<std::atomic<int>> runs(1000);
      vzero::detail::parallel_for(1000, threads, chunk, [&](int i) { ++runs[static_cast<std::size_t>(i)]; });
      int once = 0;
      for (auto& r : runs) once += r.load() == 1;
      CHECK(once == 1000);  // closed form: n indices, each once
    }
}

TEST_CASE("parallel_for rethrows the lowest failing index, as a serial loop would") {
  for (int threads : {1, 2, 4, 8})
    for (int chunk : {1, 16}) {
      std::string what;
      try {
        vzero::detail::parallel_for(500, threads, chunk, [](int i) {
          if (i == 37 || i == 38 || i == 411) throw std::runtime_error("index " + std::to_string(i));
        });
      } catch (const std::runtime_error& e) {
        what = e.what();
      }
      CHECK(what == "index 37");  // the serial loop stops at its first failure, 37
    }
}

TEST_CASE("parallel_for with no work or one index") {
  int calls = 0;
  vzero::detail::parallel_for(0, 4, 16, [&](int) { ++calls; });
  CHECK(calls == 0);
  vzero::detail::parallel_for(1, 4, 16, [&](int i) { calls += i + 1; });
  CHECK(calls == 1);
}
