// The blank wells screened together (src/blank/screen.hpp): the bend they share, their pooled
// read noise, a disturbed start judged against the others, its reads replaced. Constructed
// blanks whose answers are worked out here.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <cstdint>
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
vzero::Channel blanks(int count, const std::vector<int>& phase, int reads = 20, double dt = 10) {
  vzero::Channel c;
  for (int i = 0; i < reads; ++i) c.time_s.push_back(dt * i);
  c.values.resize(reads, count);
  c.status = vzero::StatusMatrix::Constant(reads, count, vzero::ReadStatus::ok);
  for (int k = 0; k < count; ++k) {
    c.wells.push_back(k);
    for (int i = 0; i < reads; ++i) {
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
  // line is D + e (phase 0) or D − e (phase 1), where D = bend − (bend's own line) and
  // e = noise − (noise's line) of phase 0. A blank's bend is the median of the other three:
  // for a phase-0 blank {D + e, D − e, D − e}, whose median is D − e whatever the sign of e;
  // for a phase-1 blank D + e. Taken off, each blank is a line plus twice its noise (its own
  // noise and the others' opposite one), whose second differences are all ±8σ: pooled noise
  // 1.4826·8σ/√6 (1.4826 = 1/Φ⁻¹(3/4), the MAD's normal-consistency constant, and Var = 6σ² of
  // a second difference of white noise: common practice). Nothing is disturbed and no read is a
  // spike, so the reads are kept as they are.
  const vzero::Channel c = blanks(4, {0, 0, 1, 1});
  const vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, {0, 1, 2, 3}, false);
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
    const double d = bend(t) - (mb + sxy / sxx * (t - mt));
    const double e = (i % 2 ? -k_sigma : k_sigma) - sxn / sxx * (t - mt);  // the noise of phase 0 has mean 0
    for (int k = 0; k < 4; ++k)
      CHECK(s.bend(i, k) == doctest::Approx(k < 2 ? d - e : d + e).epsilon(1e-9).scale(1e-3));
  }
  CHECK_REL(s.noise_sd, 1.4826 * 8 * k_sigma / std::sqrt(6.0), 1e-9);
  // Each blank's scatter once its bend is off: its departure from its line, 2e, whose own line
  // is 0 (e is already the noise less its line), so √(Σ(2e)²/(20 − 2)); about a straight line
  // instead, the bend counts too: √(Σ(D ± e)²/18).
  double see = 0, sdp = 0, sdm = 0;
  for (int i = 0; i < 20; ++i) {
    const double t = c.time_s[static_cast<std::size_t>(i)];
    const double d = bend(t) - (mb + sxy / sxx * (t - mt));
    const double e = (i % 2 ? -k_sigma : k_sigma) - sxn / sxx * (t - mt);
    see += 4 * e * e, sdp += (d + e) * (d + e), sdm += (d - e) * (d - e);
  }
  for (int k = 0; k < 4; ++k) {
    CHECK_REL(s.flat_sd[static_cast<std::size_t>(k)], std::sqrt(see / 18), 1e-6);
    CHECK_REL(s.line[static_cast<std::size_t>(k)].resid_sd, std::sqrt((k < 2 ? sdp : sdm) / 18), 1e-9);
  }
  for (int k = 0; k < 4; ++k) {
    CHECK(s.skip[static_cast<std::size_t>(k)] == 0);
    CHECK(s.spikes[static_cast<std::size_t>(k)] == 0);
    // Its line: its own slope, the bend's and the noise's (opposite in the two phases).
    CHECK_REL(s.line[static_cast<std::size_t>(k)].slope, 1e-5 * (k + 1) + (sxy + (k < 2 ? sxn : -sxn)) / sxx, 1e-9);
    for (int i = 0; i < 20; ++i) CHECK(s.reads(i, k) == c.values(i, k));
  }
}

TEST_CASE("smooth: every blank read becomes the blank's line plus its bend") {
  // The four blanks of the case above, step 6 on. Blank k of phase p reads
  // a_k + b_k·t + bend(t) ± n(t) (n: the phase-0 noise; + for phase 0), and its bend is
  // d ∓ e (d = bend − L[bend], e = n − L[n], L[·] the least-squares line over the reads).
  // Less its bend it is a_k + b_k·t + L[bend] ± (2n − L[n]), whose line is
  // a_k + b_k·t + L[bend] ± L[n]; that line plus the bend is
  // a_k + b_k·t + bend(t) ± (2·L[n] − n): the blank without its own noise, carrying the
  // others' (the alternating noise makes every other blank's the opposite of its own).
  const vzero::Channel c = blanks(4, {0, 0, 1, 1});
  const vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, {0, 1, 2, 3}, true);
  double mt = 0;
  for (double t : c.time_s) mt += t / 20;
  double sxx = 0, sxn = 0;
  for (int i = 0; i < 20; ++i) {
    const double t = c.time_s[static_cast<std::size_t>(i)];
    sxx += (t - mt) * (t - mt), sxn += (t - mt) * (i % 2 ? -k_sigma : k_sigma);
  }
  for (int k = 0; k < 4; ++k)
    for (int i = 0; i < 20; ++i) {
      const double t = c.time_s[static_cast<std::size_t>(i)];
      const double n = i % 2 ? -k_sigma : k_sigma, ln = sxn / sxx * (t - mt);  // the noise has mean 0
      const double sign = k < 2 ? 1.0 : -1.0;
      CHECK(s.reads(i, k) ==
            doctest::Approx(0.05 + 0.001 * k + 1e-5 * (k + 1) * t + bend(t) + sign * (2 * ln - n)).epsilon(1e-12).scale(1));
    }
  // With fewer than four blanks there is no bend, and the reads stay as read.
  const vzero::detail::BlankScreen three = vzero::detail::screen_blanks(blanks(3, {0, 1, 0}), {0, 1, 2}, true);
  const vzero::Channel c3 = blanks(3, {0, 1, 0});
  for (int k = 0; k < 3; ++k)
    for (int i = 0; i < 20; ++i) CHECK(three.reads(i, k) == c3.values(i, k));
}

TEST_CASE("a disturbed start is judged against the other blanks; only its reads are replaced") {
  // Twelve blanks on a plate that bends (20 reads 10 s apart), independent read noise of SD
  // σ (drawn by the test's own generator, so the same on every platform); the last blank's
  // first read is 0.004 AU (8σ) low, the dip gone (to 5 %) one read later:
  // −0.004·e^(−t/(10 s/3)). Judged against the other eleven, the blank less their median bend
  // is a line plus noise (the median of eleven adds about 0.4σ), and the dip stands out at
  // the noise pooled over all twelve. Its replaced reads are its line (after them, bend taken
  // off) plus the bend: what it would have read, within 3σ; its later reads are kept as
  // read; no calm blank is taken for disturbed. (How often this finds what a blank judged
  // alone misses, on simulated plates: tests/bench/README.md.)
  constexpr int count = 12, reads = 20;
  vzero::Channel c = blanks(count, std::vector<int>(count, 0), reads, 10);
  std::uint64_t state = 20261203;
  const auto uniform = [&] {  // splitmix64 (Steele, Lea & Flood 2014), 53 bits
    std::uint64_t x = (state += 0x9e3779b97f4a7c15ULL);
    x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
    x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
    return (static_cast<double>((x ^ (x >> 31)) >> 11) + 0.5) / 9007199254740992.0;
  };
  for (int k = 0; k < count; ++k)
    for (int i = 0; i < reads; ++i) {  // the alternating noise swapped for a normal draw (Box–Muller)
      const double normal = std::sqrt(-2 * std::log(uniform())) * std::cos(2 * std::acos(-1.0) * uniform());
      c.values(i, k) += -(i % 2 ? -k_sigma : k_sigma) + k_sigma * normal;
    }
  for (int i = 0; i < reads; ++i)
    c.values(i, count - 1) -= 0.004 * std::exp(-c.time_s[static_cast<std::size_t>(i)] / (10.0 / 3));
  std::vector<int> columns(count);
  for (int k = 0; k < count; ++k) columns[static_cast<std::size_t>(k)] = k;
  const vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, columns, false);
  for (int k = 0; k + 1 < count; ++k) CHECK(s.skip[static_cast<std::size_t>(k)] == 0);
  REQUIRE(s.skip[count - 1] >= 1);
  const double a = 0.05 + 0.001 * (count - 1), b = 1e-5 * count;  // the last blank's line
  for (int i = 0; i < reads; ++i) {
    const double t = c.time_s[static_cast<std::size_t>(i)];
    if (i < s.skip[count - 1])
      CHECK(std::fabs(s.reads(i, count - 1) - (a + b * t + bend(t))) < 3 * k_sigma);
    else
      CHECK(s.reads(i, count - 1) == c.values(i, count - 1));
  }
  CHECK(s.noise_sd < 1.3 * k_sigma);  // pooled: σ·√(1 + ~0.15) from the median of eleven, plus scatter
  CHECK(s.noise_sd > 0.8 * k_sigma);
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
  vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, {0}, false);
  CHECK(s.skip[0] == 2);
  CHECK(std::fabs(s.line[0].slope / 1e-4 - 1) < 0.03);
  // The two reads replaced by that line (no bend with one blank), the rest kept.
  for (int i = 0; i < 20; ++i)
    CHECK(s.reads(i, 0) == (i < 2 ? s.line[0].intercept + s.line[0].slope * t[static_cast<std::size_t>(i)] : y[static_cast<std::size_t>(i)]));
  // Without the jump the blank is clean.
  y[0] -= 0.05;
  for (int i = 1; i < 20; ++i) y[static_cast<std::size_t>(i)] -= 0.05 * std::exp(-3.0 * i);
  c.values = Eigen::Map<const Eigen::MatrixXd>(y.data(), 20, 1);
  s = vzero::detail::screen_blanks(c, {0}, false);
  CHECK(s.skip[0] == 0);
}

TEST_CASE("a blank's single far read (a bubble) is replaced by its neighbours' line") {
  // Five blanks as above; blank 2's read 9 (t = 90 s) is 0.01 AU (20σ) high. Its six
  // neighbours (reads 6–8, 10–12) carry ±σ about a line (their scatter about it ≈ σ, calm),
  // so the read sits about 20σ off their line, far beyond 5 prediction SEs
  // (σ·√(1 + 1/6 + 9²·…/Σ(t − t̄)²) ≈ 1.1σ): a spike. Replaced by that line plus the bend,
  // it is back within 2σ of what the blank would have read; every other read is kept, and
  // no other read of any blank is taken for a spike.
  vzero::Channel c = blanks(5, {0, 0, 1, 1, 0});
  c.values(9, 2) += 0.01;
  const vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, {0, 1, 2, 3, 4}, false);
  for (int k = 0; k < 5; ++k) CHECK(s.spikes[static_cast<std::size_t>(k)] == (k == 2 ? 1 : 0));
  CHECK(std::fabs(s.reads(9, 2) - (0.052 + 3e-5 * 90 + bend(90))) < 2 * k_sigma);
  for (int k = 0; k < 5; ++k)
    for (int i = 0; i < 20; ++i)
      if (!(k == 2 && i == 9)) CHECK(s.reads(i, k) == c.values(i, k));
}

TEST_CASE("smooth: a blank with a curve of its own keeps its reads; the others are smoothed") {
  // Five blanks as above (they share the plate's bend). Blank 4 also carries a background
  // reaction of its own that slows, 0.005·(1 − e^(−t/60 s)) AU: 10σ at the end, a curve no
  // other blank shares, so the bend (the median of the others) leaves it in blank 4 less its
  // bend. Its (t − t̄)² term is then far beyond the 1 % t quantile (the alternating ±σ noise
  // has no square trend of that size), and its reads are kept as read: its samples must
  // subtract that curve. The four others are smoothed (their reads change).
  vzero::Channel c = blanks(5, {0, 0, 1, 1, 0});
  for (int i = 0; i < 20; ++i) c.values(i, 4) += 0.005 * -std::expm1(-c.time_s[static_cast<std::size_t>(i)] / 60.0);
  const vzero::detail::BlankScreen s = vzero::detail::screen_blanks(c, {0, 1, 2, 3, 4}, true);
  for (int k = 0; k < 4; ++k) {
    CHECK(s.smoothed[static_cast<std::size_t>(k)] == 1);
    int changed = 0;
    for (int i = 0; i < 20; ++i) changed += s.reads(i, k) != c.values(i, k);
    CHECK(changed > 10);
  }
  CHECK(s.smoothed[4] == 0);
  for (int i = 0; i < 20; ++i) CHECK(s.reads(i, 4) == c.values(i, 4));
}
