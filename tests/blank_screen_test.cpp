// The blank wells screened together (src/blank/screen.hpp): the bend they share, their pooled
// read noise, a disturbed start judged against the others, its reads replaced. Constructed
// blanks whose answers are worked out here.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <vector>

#include "blank/screen.hpp"
#include "core/start_screen.hpp"
#include "test_support.hpp"

namespace {

constexpr double k_sigma = 0.0005;  // read noise: ±σ alternating, so every second difference is ±4σ

// The bend every blank shares: a plate settling to temperature, 0.01·(1 − e^(−t/50 s)) AU.
double bend(double t) { return 0.01 * -std::expm1(-t / 50.0); }

// 20 reads 10 s apart; blank k = 0.05 + 0.001·k + 1e-5·(k + 1)·t + bend(t) ± σ, the noise's
// sign alternating read by read and opposite in blanks of odd and even `phase`.
vzero::Channel blanks(int count, const std::vector<int>& phase) {
  vzero::Channel c;
  for (int i = 0; i < 20; ++i) c.time_s.push_back(10.0 * i);
  c.values.resize(20, count);
  c.status = vzero::StatusMatrix::Constant(20, count, vzero::ReadStatus::ok);
  for (int k = 0; k < count; ++k) {
    c.wells.push_back(k);
    for (int i = 0; i < 20; ++i) {
      const double t = c.time_s[static_cast<std::size_t>(i)];
      const double noise = (i % 2 ? -k_sigma : k_sigma) * (phase[static_cast<std::size_t>(k)] % 2 ? -1 : 1);
      c.values(i, k) = 0.05 + 0.001 * k + 1e-5 * (k + 1) * t + bend(t) + noise;
    }
  }
  return c;
}

}  // namespace

TEST_CASE("the bend all blanks share is found and taken off before their starts are judged") {
  // Four blanks, two of each noise phase. Each blank's departure from its own least-squares
  // line is D + e or D − e, where D = bend − (bend's own line) and e = noise − (noise's line),
  // the same in blanks of one phase; the median of {D + e, D + e, D − e, D − e} is D exactly.
  // Taken off, each blank is a line plus its noise, whose second differences are all ±4σ:
  // pooled noise 1.4826·4σ/√6. Nothing is disturbed, so the reads are kept as they are.
  const vzero::Channel c = blanks(4, {0, 0, 1, 1});
  const vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, {0, 1, 2, 3});
  // D worked here: the least-squares line of the bend over t = 0, 10, …, 190 s.
  double mt = 0, mb = 0;
  for (double t : c.time_s) mt += t / 20, mb += bend(t) / 20;
  double sxy = 0, sxx = 0, sxn = 0;  // sxn: Σ(t − t̄)·noise of phase 0
  for (int i = 0; i < 20; ++i) {
    const double t = c.time_s[static_cast<std::size_t>(i)];
    sxy += (t - mt) * (bend(t) - mb), sxx += (t - mt) * (t - mt), sxn += (t - mt) * (i % 2 ? -k_sigma : k_sigma);
  }
  for (int i = 0; i < 20; ++i) {
    const double t = c.time_s[static_cast<std::size_t>(i)];
    CHECK(s.bend(i) == doctest::Approx(bend(t) - (mb + sxy / sxx * (t - mt))).epsilon(1e-9).scale(1e-3));
  }
  CHECK_REL(s.noise_sd, 1.4826 * 4 * k_sigma / std::sqrt(6.0), 1e-9);
  for (int k = 0; k < 4; ++k) {
    CHECK(s.skip[static_cast<std::size_t>(k)] == 0);
    // Its line: its own slope, the bend's and the noise's (opposite in the two phases).
    CHECK_REL(s.line[static_cast<std::size_t>(k)].slope, 1e-5 * (k + 1) + (sxy + (k < 2 ? sxn : -sxn)) / sxx, 1e-9);
    for (int i = 0; i < 20; ++i) CHECK(s.reads(i, k) == c.values(i, k));
  }
}

TEST_CASE("a small disturbed start the shared bend hides is found; only its reads are replaced") {
  // Seven blanks; the last one's first read is 0.004 AU (8σ) low, the dip gone (to 5 %) one
  // read later: −0.004·e^(−t/(10 s/3)). Alone, with its own second-difference noise, the start
  // screen cannot tell it from the bend (the bend's curvature is largest there); judged
  // against the other six, the blank less the bend is a line plus noise, and the dip stands
  // out. Its replaced reads are its line (after them, bend taken off) plus the bend: what it
  // would have read, within 2σ (the line is fitted to reads carrying ±σ, and the median of
  // seven departures lands on a blank of one phase or the other, so the bend it gives carries
  // ±σ too); its later reads are kept as read.
  vzero::Channel c = blanks(7, {0, 0, 0, 1, 1, 1, 0});
  for (int i = 0; i < 20; ++i) c.values(i, 6) -= 0.004 * std::exp(-c.time_s[static_cast<std::size_t>(i)] / (10.0 / 3));
  const vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, {0, 1, 2, 3, 4, 5, 6});
  for (int k = 0; k < 6; ++k) CHECK(s.skip[static_cast<std::size_t>(k)] == 0);
  REQUIRE(s.skip[6] >= 1);
  for (int i = 0; i < 20; ++i) {
    const double t = c.time_s[static_cast<std::size_t>(i)];
    if (i < s.skip[6])
      CHECK(std::fabs(s.reads(i, 6) - (0.056 + 7e-5 * t + bend(t))) < 2 * k_sigma);
    else
      CHECK(s.reads(i, 6) == c.values(i, 6));
  }
  // The lone screen (how each blank was judged before): the same blank with its own
  // second-difference noise misses it (|z| 4.35 < 5, printed).
  std::vector<double> y(20);
  for (int i = 0; i < 20; ++i) y[static_cast<std::size_t>(i)] = c.values(i, 6);
  std::vector<double> d;
  for (int i = 1; i + 1 < 20; ++i) d.push_back(std::fabs(y[static_cast<std::size_t>(i + 1)] - 2 * y[static_cast<std::size_t>(i)] + y[static_cast<std::size_t>(i - 1)]));
  std::sort(d.begin(), d.end());
  const double own_sd = 1.4826 * 0.5 * (d[8] + d[9]) / std::sqrt(6.0);
  const auto lone = vzero::detail::screen_start(c.time_s.data(), y.data(), 20, 5, own_sd);
  MESSAGE(fmt::format("lone screen: skip {} z {:.2f}, own sd {:.6f}", lone.skip, lone.z, own_sd));
  CHECK(lone.skip == 0);
}

TEST_CASE("one blank alone: its disturbed start is found against its own noise and its reads replaced") {
  // With one blank there is no shared bend; its own noise is the yardstick.
  // Blank: 0.05 + 1e-4·t AU at t = 0, 10, …, 190 s, read noise ±0.001 AU alternating (its
  // second differences are ±0.004, so the robust SD is 1.4826·0.004/√6 = 0.00242 AU), and a
  // first read 0.05 AU high that decays with τ = Δt/3 (0.05·e^(−3) = 0.00249 AU left at the
  // second read). The jump is ~20 noise SDs; reads 0 and 1 are above one noise SD (0.05 and
  // 0.00249 > 0.00242), read 2 is not (0.000124): two reads are set aside. The line through
  // the other 18 reads: the alternating noise moves its slope by about
  // 0.001·10·9/Σ(t − t̄)² = 0.09/48450 ≈ 1.9e-6 AU/s (about 2 %, checked within 3 %).
  std::vector<double> t, y;
  for (int i = 0; i < 20; ++i) {
    t.push_back(10.0 * i);
    y.push_back(0.05 + 1e-4 * 10 * i + (i % 2 ? -0.001 : 0.001) + (i == 0 ? 0.05 : 0.05 * std::exp(-3.0 * i)));
  }
  vzero::Channel c;
  c.time_s = t;
  c.wells = {0};
  c.values = Eigen::Map<const Eigen::MatrixXd>(y.data(), 20, 1);
  c.status = vzero::StatusMatrix::Constant(20, 1, vzero::ReadStatus::ok);
  vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, {0});
  CHECK(s.skip[0] == 2);
  CHECK(std::fabs(s.line[0].slope / 1e-4 - 1) < 0.03);
  // The two reads replaced by that line (no bend with one blank), the rest kept.
  for (int i = 0; i < 20; ++i)
    CHECK(s.reads(i, 0) == (i < 2 ? s.line[0].intercept + s.line[0].slope * t[static_cast<std::size_t>(i)] : y[static_cast<std::size_t>(i)]));
  // Without the jump the blank is clean.
  y[0] -= 0.05;
  for (int i = 1; i < 20; ++i) y[static_cast<std::size_t>(i)] -= 0.05 * std::exp(-3.0 * i);
  c.values = Eigen::Map<const Eigen::MatrixXd>(y.data(), 20, 1);
  s = vzero::detail::screen_blanks(c, {0});
  CHECK(s.skip[0] == 0);
}
