// CPU time of one Theil–Sen line (src/rates/robust.hpp) against the number of points, with
// and without its exact Sen (1968) interval: what the interval costs the rate finder.
// Points: x = 0, 10, 20, … s; y = 0.05 + 4·10⁻⁴·x + N(0, 0.002²) read noise (an invented
// straight trace, 64 of them cycled, std::mt19937_64 seed 7). Each figure is the median of 5
// repetitions of CPU time (CLOCK_THREAD_CPUTIME_ID, so a shared machine's other work counts
// less than in wall time) divided by the calls made.
//   vzero_sen_speed [N ...]      (default: 10 20 30 47 60 120 300 600 1000 2000)
#include <fmt/format.h>
#include <time.h>

#include <algorithm>
#include <cstdlib>
#include <random>
#include <vector>

#include "rates/robust.hpp"

namespace {

double cpu_s() {
  timespec t{};
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &t);
  return static_cast<double>(t.tv_sec) + 1e-9 * static_cast<double>(t.tv_nsec);
}

// Median over 5 repetitions of the CPU time per call, in µs; `sum` keeps the work alive.
double time_calls(const std::vector<double>& x, const std::vector<std::vector<double>>& ys, bool interval, double& sum) {
  const int n = static_cast<int>(x.size());
  const long calls = std::max(20L, 20'000'000L / (static_cast<long>(n) * n));
  std::vector<double> per_call;
  for (int rep = 0; rep < 5; ++rep) {
    const double t0 = cpu_s();
    for (long k = 0; k < calls; ++k) {
      const auto f = vzero::detail::theil_sen(x.data(), ys[static_cast<std::size_t>(k % 64)].data(), n, nullptr, interval);
      sum += f.slope + (interval ? f.ci_high - f.ci_low : 0.0);
    }
    per_call.push_back((cpu_s() - t0) / static_cast<double>(calls) * 1e6);
  }
  std::sort(per_call.begin(), per_call.end());
  return per_call[2];
}

}  // namespace

int main(int argc, char** argv) {
  std::vector<int> sizes{10, 20, 30, 47, 60, 120, 300, 600, 1000, 2000};
  if (argc > 1) {
    sizes.clear();
    for (int a = 1; a < argc; ++a) sizes.push_back(std::atoi(argv[a]));
  }
  fmt::print("Theil–Sen per call, CPU µs (median of 5); invented straight traces, seed 7\n");
  fmt::print("{:>6} {:>14} {:>14} {:>10}\n", "points", "with interval", "slope only", "interval");
  std::mt19937_64 gen(7);
  std::normal_distribution<double> noise(0, 0.002);
  double sum = 0;
  for (int n : sizes) {
    if (n < 3) continue;
    std::vector<double> x(static_cast<std::size_t>(n));
    for (int i = 0; i < n; ++i) x[static_cast<std::size_t>(i)] = 10.0 * i;
    std::vector<std::vector<double>> ys(64, std::vector<double>(static_cast<std::size_t>(n)));
    for (auto& y : ys)
      for (int i = 0; i < n; ++i) y[static_cast<std::size_t>(i)] = 0.05 + 4e-4 * x[static_cast<std::size_t>(i)] + noise(gen);
    const double with = time_calls(x, ys, true, sum), without = time_calls(x, ys, false, sum);
    fmt::print("{:>6} {:>14.2f} {:>14.2f} {:>9.0f} %\n", n, with, without, 100 * (with - without) / with);
  }
  fmt::print("(checksum {:.6g})\n", sum);
}
