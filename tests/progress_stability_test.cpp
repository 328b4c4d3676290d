// Tests of Selwyn's test (include/vzero/progress.hpp, stability_tests). Check values: closed
// forms worked here — a stable enzyme with first-order depletion, P = S0·(1 − e^{−k·[E]·t}),
// is a function of [E]·t alone (Selwyn, Biochim. Biophys. Acta 97, 1965); a linear-phase
// enzyme decaying as e^{−k_i·t} makes P = v0·(1 − e^{−k_i·t})/k_i with v0 = c·[E], so the
// [E]·t to make P is u(P) = −[E]·ln(1 − k_i·P/(c·[E]))/k_i.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

#include "test_support.hpp"
#include "vzero/progress.hpp"

namespace {

// Normal deviates from a fixed 64-bit generator (Box–Muller), the same on every platform.
struct Noise {
  std::mt19937_64 gen;
  explicit Noise(std::uint64_t seed) : gen(seed) {}
  double operator()() {
    const double u1 = (static_cast<double>(gen() >> 11) + 0.5) / 9007199254740992.0;
    const double u2 = (static_cast<double>(gen() >> 11) + 0.5) / 9007199254740992.0;
    return std::sqrt(-2 * std::log(u1)) * std::cos(2 * M_PI * u2);
  }
};

// Wells at one S0: enzyme levels × replicates, read every 30 s for 30 min, product from
// `product(E, t_min)` plus a baseline offset per well and noise of SD `sd`.
template <class F>
std::vector<vzero::ProgressWell> series(const std::vector<double>& levels, int replicates, F product, double sd,
                                        std::uint64_t seed, double s0 = 100) {
  Noise noise(seed);
  std::vector<vzero::ProgressWell> out;
  for (double e : levels)
    for (int r = 0; r < replicates; ++r) {
      vzero::ProgressWell w;
      w.well = "E" + std::to_string(e) + "r" + std::to_string(r);
      w.s0 = s0, w.enzyme = e;
      const double offset = 0.5 + 0.1 * static_cast<double>(out.size());
      for (int i = 0; i <= 60; ++i) {
        w.t_s.push_back(30.0 * i);
        w.p.push_back(offset + product(e, 0.5 * i) + sd * noise());
      }
      out.push_back(w);
    }
  return out;
}

// First-order depletion by a stable enzyme: k = 0.01 per enzyme unit per min, S0 = 100.
double stable(double e, double t) { return 100 * (1 - std::exp(-0.01 * e * t)); }

// A linear-phase enzyme (c = 1 product per enzyme unit per min) losing activity at k_i = 0.04/min.
constexpr double k_c = 1, k_i = 0.04;
double decaying(double e, double t) { return k_c * e * (1 - std::exp(-k_i * t)) / k_i; }

}  // namespace

TEST_CASE("Selwyn's test: a stable enzyme's curves superimpose on [E]·t and are not flagged") {
  int significant = 0;
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    CAPTURE(seed);
    const auto wells = series({1, 2, 4}, 2, stable, 0.2, seed);
    const auto tests = vzero::stability_tests(wells, 0);
    REQUIRE(tests.size() == 1);
    const auto& t = tests[0];
    REQUIRE(t.tested);
    CHECK(!t.unstable);
    CHECK(t.df1 == 8);  // (3 levels − 1) × 4 coefficients
    CHECK(t.et_ratio == doctest::Approx(1).epsilon(0.05));
    significant += t.p_value < 0.01;
  }
  // Binomial(20, 0.01): P(3 or more tests significant at 1 %) = 0.001.
  CHECK(significant <= 2);
}

TEST_CASE("Selwyn's test: a decaying enzyme is flagged, and its [E]·t ratio is the closed form's") {
  // u_common = lowest level × 30 min; P* = half the lowest level's product there.
  const std::vector<double> levels = {1, 2, 4};
  const double u_common = 1 * 30.0;
  const double p_star = 0.5 * decaying(1, u_common / 1);
  auto u_of = [](double e, double p) { return -e * std::log(1 - k_i * p / (k_c * e)) / k_i; };
  const double ratio = u_of(1, p_star) / u_of(4, p_star);  // ≈ 1.175
  SUBCASE("noiseless: P* and the ratio within 1e-3 of the closed form") {
    const auto tests = vzero::stability_tests(series(levels, 1, decaying, 0, 1), 0);
    REQUIRE(tests.size() == 1);
    REQUIRE(tests[0].tested);
    CHECK(tests[0].u_common == doctest::Approx(u_common));
    CHECK(std::fabs(tests[0].product_level / p_star - 1) < 1e-3);
    CHECK(std::fabs(tests[0].et_ratio / ratio - 1) < 1e-3);
    CHECK(std::fabs(tests[0].levels[1].et_needed / u_of(2, p_star) - 1) < 1e-3);
    CHECK(tests[0].unstable);
    // The intercepts are the wells' baselines (0.5 + 0.1·w in series() above), to 1e-4 of the
    // product the lowest level makes (2·P*): the quartic's approximation of the exponential.
    REQUIRE(tests[0].intercepts.size() == 3);
    for (std::size_t w = 0; w < 3; ++w)
      CHECK(std::fabs(tests[0].intercepts[w] - (0.5 + 0.1 * double(w))) < 1e-4 * 2 * p_star);
  }
  SUBCASE("with read noise: flagged, p tiny, the verdict says the enzyme loses activity") {
    for (std::uint64_t seed = 1; seed <= 5; ++seed) {
      CAPTURE(seed);
      const auto tests = vzero::stability_tests(series(levels, 2, decaying, 0.2, seed), 0);
      REQUIRE(tests.size() == 1);
      CHECK(tests[0].unstable);
      CHECK(tests[0].p_value < 1e-6);
      CHECK(std::fabs(tests[0].et_ratio / ratio - 1) < 0.06);  // read noise: 1.14–1.24 over seeds 1–5
      CHECK(tests[0].verdict.find("loses activity") != std::string::npos);
    }
  }
}

TEST_CASE("Selwyn's test: which S0 are tested, and what it declines") {
  SUBCASE("one enzyme level: no test") { CHECK(vzero::stability_tests(series({2}, 3, stable, 0.2, 1), 0).empty()); }
  SUBCASE("wells without an enzyme amount are ignored") {
    auto wells = series({1, 2}, 1, stable, 0.2, 1);
    wells[1].enzyme = NAN;
    CHECK(vzero::stability_tests(wells, 0).empty());
  }
  SUBCASE("two S0 give two tests, in ascending S0") {
    auto a = series({1, 2}, 1, stable, 0.2, 1, 50), b = series({1, 2}, 1, stable, 0.2, 2, 100);
    a.insert(a.end(), b.begin(), b.end());
    const auto tests = vzero::stability_tests(a, 0);
    REQUIRE(tests.size() == 2);
    CHECK(tests[0].s0 == 50);
    CHECK(tests[1].s0 == 100);
  }
  SUBCASE("levels 40× apart: too few reads of the highest level, said so") {
    const auto tests = vzero::stability_tests(series({1, 40}, 1, stable, 0.2, 1), 0);
    REQUIRE(tests.size() == 1);
    CHECK(!tests[0].tested);
    CHECK(tests[0].verdict.find("not tested") == 0);
  }
  SUBCASE("a third level 40× above: left out and said so, the other two tested") {
    const auto tests = vzero::stability_tests(series({1, 2, 40}, 1, stable, 0.2, 1), 0);
    REQUIRE(tests.size() == 1);
    CHECK(tests[0].tested);
    CHECK(tests[0].levels.size() == 2);
    REQUIRE(tests[0].left_out.size() == 1);
    CHECK(tests[0].left_out[0].find("E40") == 0);
    CHECK(tests[0].verdict.find("left out") != std::string::npos);
  }
  SUBCASE("the lead moves [E]·t: reads before the reaction started are not [E]·t > 0") {
    const auto tests = vzero::stability_tests(series({1, 2}, 1, stable, 0.2, 1), -4000);
    REQUIRE(tests.size() == 1);
    CHECK(!tests[0].tested);
  }
}

TEST_CASE("Selwyn's test: its error term, and its power on decaying enzymes") {
  // The F test's error: the scatter between replicate wells when a level has two; with one well
  // per level, the reads'. Stable, 3 levels: not significant in either case (seed 1).
  const auto dup = vzero::stability_tests(series({1, 2, 4}, 2, stable, 0.2, 1), 0);
  REQUIRE(dup.size() == 1);
  CHECK(dup[0].replicate_error);
  CHECK(dup[0].df2 == 12);  // (6 wells − 3 levels) × 4 coefficients
  const auto single = vzero::stability_tests(series({1, 2, 4}, 1, stable, 0.2, 1), 0);
  REQUIRE(single.size() == 1);
  CHECK(!single[0].replicate_error);
  CHECK(single[0].p_value > 0.01);
  // Power, the closed-form decaying enzyme above (k_i = 0.04/min, read noise SD 0.2): two
  // levels in duplicate, and the simulator's five levels (1 to 0.12) in duplicate, 10 series each.
  int two = 0, five = 0;
  for (std::uint64_t seed = 1; seed <= 10; ++seed) {
    const auto a = vzero::stability_tests(series({1, 2}, 2, decaying, 0.2, seed), 0);
    const auto b = vzero::stability_tests(series({1, 0.6, 0.35, 0.2, 0.12}, 2, decaying, 0.2, seed), 0);
    REQUIRE(a.size() == 1);
    REQUIRE(b.size() == 1);
    two += a[0].unstable;
    five += b[0].unstable;
  }
  MESSAGE("decaying enzyme flagged: two levels " << two << " of 10, five levels " << five << " of 10");
  CHECK(two == 10);
  // Five levels: 7 of 10 here. A NumPy replica of both tests on 40 such series flagged 35 with
  // the reads' error term (before) and 35 with the replicate wells' (now); at k_i = 0.02/min 23
  // and 16: the price of an error term that also holds for wells that drift.
  CHECK(five >= 6);
}

TEST_CASE("Selwyn's test: noise shared by the reads of one time (a blank subtracted from every well)") {
  // A stable enzyme, 3 levels in duplicate, own read noise SD 0.2 plus a shared noise of SD 0.2
  // added to every well at each read time: the shared share of the error is 0.04/(0.04 + 0.04)
  // = 0.5 (worked here), and the test keeps its level (Binomial(20, 0.01): P(3 or more) = 0.001).
  int significant = 0;
  std::vector<double> share;
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    auto wells = series({1, 2, 4}, 2, stable, 0.2, seed);
    Noise shared(1000 + seed);
    std::vector<double> at_read(wells[0].t_s.size());
    for (double& v : at_read) v = 0.2 * shared();
    for (auto& w : wells)
      for (std::size_t i = 0; i < w.p.size(); ++i) w.p[i] += at_read[i];
    const auto t = vzero::stability_tests(wells, 0);
    REQUIRE(t.size() == 1);
    significant += t[0].p_value < 0.01;
    share.push_back(t[0].shared_noise);
  }
  std::sort(share.begin(), share.end());
  MESSAGE("shared share of the error, median " << share[10] << "; significant at 1 %: " << significant << " of 20");
  // Measured median 0.36: the moments come from the ordinary fit's residuals, and its curves
  // (one per level, fitted to wells that share the noise) absorb part of what is shared.
  CHECK(share[10] > 0.25);
  CHECK(share[10] < 0.6);
  CHECK(significant <= 2);
}
