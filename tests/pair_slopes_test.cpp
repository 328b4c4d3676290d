// Exact order statistics of pairwise slopes (src/rates/pair_slopes.hpp), the core of
// Theil–Sen for long windows. References: the definition (every slope formed and sorted with
// std::sort), the general Theil–Sen code on the same points in another order, and SciPy
// 1.10.1 scipy.stats.theilslopes (Debian python3-scipy) for two pinned cases.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <random>
#include <utility>
#include <vector>

#include "rates/pair_slopes.hpp"
#include "rates/robust.hpp"
#include "test_support.hpp"

namespace {

using vzero::detail::pair_slope_ranks;

std::vector<double> all_slopes_sorted(const std::vector<double>& x, const std::vector<double>& y) {
  std::vector<double> s;
  for (std::size_t i = 0; i < x.size(); ++i)
    for (std::size_t j = i + 1; j < x.size(); ++j) s.push_back((y[j] - y[i]) / (x[j] - x[i]));
  std::sort(s.begin(), s.end());
  return s;
}

// The ranks as pair_slope_ranks_direct selected them before the bucket methods: every slope
// formed in pair order, then a quickselect per rank in ascending order, each in what is left
// above the one before. Reference for which of +0 and −0 comes out when both are slopes.
std::vector<double> quickselect_in_order(const std::vector<double>& x, const std::vector<double>& y,
                                         std::vector<std::int64_t> ranks) {
  std::vector<double> s;
  for (std::size_t i = 0; i < x.size(); ++i)
    for (std::size_t j = i + 1; j < x.size(); ++j) s.push_back((y[j] - y[i]) / (x[j] - x[i]));
  std::vector<std::size_t> order(ranks.size());
  for (std::size_t r = 0; r < order.size(); ++r) order[r] = r;
  std::sort(order.begin(), order.end(), [&](std::size_t p, std::size_t q) { return ranks[p] < ranks[q]; });
  std::vector<double> out(ranks.size());
  std::size_t start = 0;
  for (const std::size_t r : order) {
    const auto local = static_cast<std::size_t>(ranks[r]);
    vzero::detail::select_kth(s.data() + start, s.size() - start, local - start);
    start = local;
    out[r] = s[local];
  }
  return out;
}

// Checks a spread of ranks against the full sort, bit for bit.
// `expect_bracketed`: the bracketing method must not decline (else it is never tested); it
// may on data where most slopes are equal (then every slope is formed).
void check_ranks(const std::vector<double>& x, const std::vector<double>& y, bool expect_bracketed) {
  const auto sorted = all_slopes_sorted(x, y);
  const auto n_pairs = static_cast<std::int64_t>(sorted.size());
  std::vector<std::int64_t> ranks = {0,           n_pairs - 1,     n_pairs / 2,      (n_pairs - 1) / 2,
                                     n_pairs / 3, n_pairs / 2 - 7, n_pairs / 2 + 11, (n_pairs * 97) / 100};
  for (auto& r : ranks) r = std::clamp<std::int64_t>(r, 0, n_pairs - 1);
  std::vector<double> got(ranks.size());
  pair_slope_ranks(x.data(), y.data(), static_cast<int>(x.size()), ranks.data(), static_cast<int>(ranks.size()),
                   got.data());
  std::vector<double> bracketed(ranks.size(), -1);
  const bool used = vzero::detail::pair_slope_ranks_bracketed(
      x.data(), y.data(), static_cast<int>(x.size()), ranks.data(), static_cast<int>(ranks.size()), bracketed.data());
  if (expect_bracketed && x.size() >= 50) CHECK(used);
  for (std::size_t k = 0; k < ranks.size(); ++k) {
    INFO("n = ", x.size(), ", rank ", ranks[k]);
    CHECK(got[k] == sorted[static_cast<std::size_t>(ranks[k])]);
    if (used) CHECK(bracketed[k] == sorted[static_cast<std::size_t>(ranks[k])]);
  }
}

// Integer noise in [-100, 100] from a fixed formula, the same in NumPy and C++.
std::vector<double> quantised_trace(int n, std::vector<double>& x) {
  std::vector<double> y;
  x.clear();
  for (std::int64_t i = 0; i < n; ++i) {
    const std::int64_t k = 500 + 2 * i + ((i * 7919 + 13) * 104729 % 201) - 100;
    x.push_back(10.0 * static_cast<double>(i));
    y.push_back(static_cast<double>(k) / 10000.0);
  }
  return y;
}

}  // namespace

TEST_CASE("pairwise slope ranks equal the full sort, bit for bit") {
  std::mt19937_64 rng(2024);
  std::normal_distribution<double> noise(0.0, 1.0);
  for (int n : {2, 3, 7, 50, 159, 160, 161, 257, 600, 1500}) {
    std::vector<double> x, y;
    bool ties_only = false;
    SUBCASE("noisy straight line") {
      for (int i = 0; i < n; ++i) {
        x.push_back(15.0 * i + 3);
        y.push_back(0.05 + 3e-5 * x.back() + 0.001 * noise(rng));
      }
    }
    SUBCASE("four-decimal reads (many tied slopes)") { y = quantised_trace(n, x); }
    SUBCASE("constant signal (every slope 0)") {
      for (int i = 0; i < n; ++i) {
        x.push_back(i);
        y.push_back(1.25);
      }
      ties_only = true;
    }
    SUBCASE("falling curve with gross outliers and uneven times") {
      double t = 0;
      for (int i = 0; i < n; ++i) {
        t += 1 + (i % 7) * 0.37;
        x.push_back(t);
        y.push_back(2.0 * std::exp(-t / 500) + (i % 29 == 3 ? 50.0 : 0.0) + 1e-3 * noise(rng));
      }
    }
    SUBCASE("large offsets") {
      for (int i = 0; i < n; ++i) {
        x.push_back(1e6 + 0.5 * i);
        y.push_back(4e4 + 1e-3 * i + 1e-4 * noise(rng));
      }
    }
    if (!x.empty()) check_ranks(x, y, !ties_only);
  }
}

TEST_CASE("Theil–Sen gives the same numbers on the fast and the general path") {
  // The general code (any x order, pairs with x_j > x_i) on the points in reverse order
  // is the reference for the fast code on increasing x.
  for (int n : {12, 160, 400, 1200}) {
    std::vector<double> x;
    const std::vector<double> y = quantised_trace(n, x);
    std::vector<double> xr(x.rbegin(), x.rend()), yr(y.rbegin(), y.rend());
    double sep_fast = 0, sep_general = 0;
    const auto fast = vzero::detail::theil_sen(x.data(), y.data(), n, &sep_fast);
    const auto general = vzero::detail::theil_sen(xr.data(), yr.data(), n, &sep_general);
    INFO("n = ", n);
    CHECK(fast.slope == general.slope);
    CHECK(fast.intercept == general.intercept);
    CHECK(sep_fast == sep_general);
    CHECK(fast.ci_low == general.ci_low);
    CHECK(fast.ci_high == general.ci_high);
    CHECK(fast.slope_se == general.slope_se);
  }
}

TEST_CASE("Theil–Sen on long quantised traces matches SciPy 1.10.1 theilslopes") {
  // x = 10·i s, y = (500 + 2i + ((7919 i + 13)·104729 mod 201) − 100) / 10000; values from
  // scipy.stats.theilslopes(y, x, alpha=0.95, method='joint' / 'separate'), SciPy 1.10.1.
  struct Case {
    int n;
    double slope, intercept_joint, intercept_separate, low, high;
  };
  for (const Case& c :
       {Case{400, 2.0027472527472527e-05, 0.049985851648351655, 0.050195192307692316, 1.9556313993174062e-05,
             2.0514705882352946e-05},
        Case{1000, 1.9999999999999998e-05, 0.05, 0.04980000000000001, 1.986013986013986e-05, 2.0121065375302664e-05}}) {
    std::vector<double> x;
    const std::vector<double> y = quantised_trace(c.n, x);
    double separate = 0;
    const auto f = vzero::detail::theil_sen(x.data(), y.data(), c.n, &separate);
    INFO("n = ", c.n);
    CHECK_REL(f.slope, c.slope, 1e-12);
    CHECK_REL(f.intercept, c.intercept_joint, 1e-12);
    CHECK_REL(separate, c.intercept_separate, 1e-12);
    CHECK_REL(f.ci_low, c.low, 1e-12);
    CHECK_REL(f.ci_high, c.high, 1e-12);
  }
}

TEST_CASE("ranks near the middle, as Theil–Sen asks, equal the full sort (selection by buckets)") {
  // Reference: the definition, every slope formed and sorted (all_slopes_sorted). The ranks
  // are those of a median and a Sen interval, so the direct method selects by buckets.
  std::mt19937_64 rng(20261203);
  std::normal_distribution<double> noise(0.0, 1.0);
  for (int n : {19, 20, 21, 25, 35, 36, 47, 60, 121, 300, 649}) {
    for (int kind = 0; kind < 4; ++kind) {
      std::vector<double> x, y;
      if (kind == 1) {
        y = quantised_trace(n, x);
      } else {
        for (int i = 0; i < n; ++i) {
          x.push_back(10.0 * i + (kind == 3 ? (i % 5) * 0.9 : 0.0));
          const double spike = kind == 2 && i % 11 == 4 ? 30.0 : 0.0;
          y.push_back(kind == 3 ? 0.7 : 0.1 + 2e-4 * x.back() + 0.002 * noise(rng) + spike);
        }
      }
      const auto sorted = all_slopes_sorted(x, y);
      const auto count = static_cast<std::int64_t>(sorted.size());
      const std::int64_t half = static_cast<std::int64_t>(1.96 * std::sqrt(n * (n - 1.0) * (2 * n + 5) / 18) / 2);
      std::vector<std::int64_t> ranks = {count / 2 - 1, count / 2, count / 2 - half, count / 2 + half};
      std::vector<double> got(ranks.size());
      vzero::detail::pair_slope_ranks_direct(x.data(), y.data(), n, ranks.data(), static_cast<int>(ranks.size()),
                                             got.data());
      for (std::size_t k = 0; k < ranks.size(); ++k) {
        INFO("n = ", n, ", kind ", kind, ", rank ", ranks[k]);
        CHECK(got[k] == sorted[static_cast<std::size_t>(ranks[k])]);
      }
    }
  }
}

TEST_CASE("the AVX2 bracket pass keeps and counts what the scalar loop does, bit for bit") {
  // Reference: the scalar loop of pair_slope_ranks_direct, written out here: every slope in
  // pair order (i, then j), kept when a ≤ v ≤ b, counted below when v < a.
#if defined(__x86_64__)
  if (!__builtin_cpu_supports("avx2")) {
    MESSAGE("no AVX2 on this processor: the vector pass is not used, nothing to compare");
    return;
  }
  std::mt19937_64 rng(33);
  std::normal_distribution<double> noise(0.0, 1.0);
  for (int n : {2, 3, 4, 5, 6, 8, 9, 20, 35, 36, 47, 121}) {
    for (int kind = 0; kind < 4; ++kind) {
      std::vector<double> x, y;
      if (kind == 1) {
        y = quantised_trace(n, x);  // many tied slopes
      } else if (kind == 2) {
        // ±0 in y (so −0 slopes), huge x and y (differences overflow: NaN, ±0 and ±inf
        // slopes), x not increasing: the pass must match the loop outside the callers' range too.
        for (int i = 0; i < n; ++i) {
          x.push_back(i % 3 == 0 ? -1e308 + i * 1e292 : (i < n / 2 ? 1e-300 * i : 1e308 - (n - i) * 1e292));
          const double ys[] = {-0.0, 0.0, 1.7e308, -2.5, -1.7e308};  // y_j − y_i overflows too
          y.push_back(ys[i % 5]);
        }
      } else {
        for (int i = 0; i < n; ++i) {
          x.push_back(10.0 * i + (kind == 3 ? (i % 5) * 0.9 : 0.0));
          y.push_back(0.1 + 2e-4 * x.back() + 0.002 * noise(rng) + (i % 11 == 4 ? 30.0 : 0.0));
        }
      }
      std::vector<double> slopes;
      for (int i = 0; i < n; ++i)
        for (int j = i + 1; j < n; ++j) slopes.push_back((y[j] - y[i]) / (x[j] - x[i]));
      std::vector<double> sorted = slopes;
      std::sort(sorted.begin(), sorted.end(), [](double p, double q) { return p < q || (p == p && q != q); });
      const auto m = sorted.size();
      // Brackets: at slope values exactly (a = b too), between, unbounded on either side.
      const std::vector<std::pair<double, double>> brackets = {{sorted[m / 4], sorted[(3 * m) / 4]},
                                                               {sorted[m / 2], sorted[m / 2]},
                                                               {-INFINITY, sorted[m / 3]},
                                                               {sorted[m / 3], INFINITY},
                                                               {-INFINITY, INFINITY},
                                                               {sorted[0], sorted[m - 1]},
                                                               {0.0, 0.0},
                                                               {-0.0, 1e-3},
                                                               {1e9, 2e9}};
      for (const auto& [a, b] : brackets) {
        std::vector<double> want(m);
        std::size_t want_kept = 0, want_below = 0;
        for (const double v : slopes) {
          want[want_kept] = v;
          want_kept += (v >= a) & (v <= b);
          want_below += v < a;
        }
        std::vector<double> got(m + 3);
        std::size_t below = 0;
        const std::size_t kept = vzero::detail::keep_in_bracket_avx2(x.data(), y.data(), n, a, b, got.data(), below);
        INFO("n = ", n, ", kind ", kind, ", bracket [", a, ", ", b, "]");
        CHECK(kept == want_kept);
        CHECK(below == want_below);
        CHECK(std::memcmp(got.data(), want.data(), sizeof(double) * std::min(kept, want_kept)) == 0);
      }
    }
  }
#else
  MESSAGE("not x86-64: no vector pass to compare");
#endif
}

TEST_CASE("with −0 among the slopes, small windows give the bits they gave before") {
  // Reference: quickselect_in_order, the method these sizes used before (a full sort cannot
  // tell +0 from −0). y holds +0 and −0 (so +0 − −0 and −0 − +0 give slopes of both signs)
  // and the ranks of a median and a Sen interval land on zero slopes; or y holds the least
  // subnormals, whose differences over 10 s round to ±0.
  for (int n : {19, 20, 25, 35}) {
    for (const double tiny : {0.0, 4.9e-324}) {
      std::vector<double> x, y;
      for (int i = 0; i < n; ++i) {
        x.push_back(10.0 * i);
        const double zero = tiny > 0 ? (i % 2 == 0 ? tiny : -tiny) : (i % 3 == 0 ? -0.0 : 0.0);
        y.push_back(i % 3 != 2 ? zero : (i % 2 == 0 ? 1e-3 : -1e-3));
      }
      const auto count = static_cast<std::int64_t>(n) * (n - 1) / 2;
      const std::int64_t half = static_cast<std::int64_t>(1.96 * std::sqrt(n * (n - 1.0) * (2 * n + 5) / 18) / 2);
      const std::vector<std::int64_t> ranks = {count / 2 - 1, count / 2, count / 2 - half, count / 2 + half};
      const auto want = quickselect_in_order(x, y, ranks);
      std::vector<double> got(ranks.size());
      vzero::detail::pair_slope_ranks_direct(x.data(), y.data(), n, ranks.data(), static_cast<int>(ranks.size()),
                                             got.data());
      int zeros = 0;
      for (std::size_t k = 0; k < ranks.size(); ++k) {
        INFO("n = ", n, ", tiny ", tiny, ", rank ", ranks[k]);
        CHECK(std::memcmp(&got[k], &want[k], sizeof(double)) == 0);
        zeros += got[k] == 0;
      }
      CHECK(zeros > 0);  // else the case tests nothing
    }
  }
}
