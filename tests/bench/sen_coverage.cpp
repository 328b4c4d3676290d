// Coverage of two 95 % intervals of the Theil–Sen slope by simulation: the exact Sen (1968)
// interval the rate finder uses (src/rates/robust.hpp) and a candidate from the residual
// scale, slope ± t(0.975, n − 2)·√(π/3)·σ̂/√Σ(x − x̄)², σ̂ = 1.4826·MAD of the residuals from
// the Theil–Sen line (π/3: the large-sample variance of Theil–Sen relative to least squares
// under normal noise with evenly spaced x, i.e. its efficiency 3/π ≈ 0.955 — Sen 1968, from
// memory). Measurement only: the rate finder does not use the candidate.
// Traces: x = 0, 1, …, n − 1; y = 2 + 0.5·x + noise; noise normal (SD 1), Student t with
// 3 degrees of freedom (scale 1), or normal with 5 % of reads moved by ±20 SDs (spikes).
// Replicates per case: 2,000; seed of a case 20261203 + 100·noise + size index
// (std::mt19937_64). The truth (0.5) is inside an interval when low ≤ 0.5 ≤ high.
//   vzero_sen_coverage
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <random>
#include <vector>

#include "core/stats.hpp"
#include "rates/robust.hpp"

namespace {

struct Tally {
  int exact = 0, scale = 0, total = 0;
  double exact_hw = 0, scale_hw = 0;  // mean half-widths
};

double noise_draw(int kind, std::mt19937_64& g) {
  std::normal_distribution<double> normal(0, 1);
  if (kind == 1) {
    std::student_t_distribution<double> t3(3);
    return t3(g);
  }
  double e = normal(g);
  if (kind == 2 && std::uniform_real_distribution<double>(0, 1)(g) < 0.05)
    e += std::uniform_real_distribution<double>(0, 1)(g) < 0.5 ? -20 : 20;
  return e;
}

Tally run_case(int kind, int n, std::uint64_t seed, int reps) {
  std::mt19937_64 g(seed);
  std::vector<double> x(static_cast<std::size_t>(n)), y(x.size()), r(x.size());
  double mx = 0, sxx = 0;
  for (int i = 0; i < n; ++i) x[static_cast<std::size_t>(i)] = i;
  for (double v : x) mx += v;
  mx /= n;
  for (double v : x) sxx += (v - mx) * (v - mx);
  const double tq = vzero::detail::student_t_quantile(0.975, n - 2);
  const double k_ts = std::sqrt(std::acos(-1.0) / 3);
  Tally t;
  for (int rep = 0; rep < reps; ++rep) {
    for (std::size_t i = 0; i < x.size(); ++i) y[i] = 2 + 0.5 * x[i] + noise_draw(kind, g);
    const auto f = vzero::detail::theil_sen(x.data(), y.data(), n);
    for (std::size_t i = 0; i < x.size(); ++i) r[i] = std::fabs(y[i] - (f.intercept + f.slope * x[i]));
    const double sigma = 1.4826 * vzero::detail::median_inplace(r);
    const double hw = tq * k_ts * sigma / std::sqrt(sxx);
    ++t.total;
    t.exact += f.ci_low <= 0.5 && 0.5 <= f.ci_high;
    t.scale += f.slope - hw <= 0.5 && 0.5 <= f.slope + hw;
    t.exact_hw += 0.5 * (f.ci_high - f.ci_low);
    t.scale_hw += hw;
  }
  return t;
}

}  // namespace

int main() {
  const char* names[] = {"normal", "t3", "spiked"};
  const int sizes[] = {10, 20, 47, 120, 500};
  constexpr int reps = 2000;
  fmt::print("95 % intervals of the Theil–Sen slope: coverage over {} simulated lines a case\n", reps);
  fmt::print("{:<8} {:>6} {:>12} {:>12} {:>16}\n", "noise", "points", "exact Sen", "from scale", "half-width ratio");
  for (int kind = 0; kind < 3; ++kind)
    for (int s = 0; s < 5; ++s) {
      const auto seed = static_cast<std::uint64_t>(20261203 + 100 * kind + s);
      const Tally t = run_case(kind, sizes[s], seed, reps);
      fmt::print("{:<8} {:>6} {:>11.1f}% {:>11.1f}% {:>16.3f}\n", names[kind], sizes[s], 100.0 * t.exact / t.total,
                 100.0 * t.scale / t.total, t.scale_hw / t.exact_hw);
    }
}
