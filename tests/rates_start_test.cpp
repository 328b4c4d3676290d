// Tests of the rate finder's start of trace (disturbed start, src/core/start_screen.hpp),
// its table of window rules, the tangent's read count and the precision flag
// (include/vzero/rates.hpp). Every trace is constructed here; the expected values are worked
// out beside each check (closed forms, no outside data needed).
#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <vector>

#include "core/start_screen.hpp"
#include "core/stats.hpp"
#include "rates/lag_model.hpp"
#include "rates/rate_window.hpp"
#include "test_support.hpp"
#include "vzero/rates.hpp"

namespace {

using vzero::ReadStatus;

bool has_flag(const vzero::RateResult& r, const char* f) {
  return std::find(r.flags.begin(), r.flags.end(), f) != r.flags.end();
}

struct Trace {
  std::vector<double> t, y;
  std::vector<ReadStatus> st;
  vzero::TraceView view(double noise_sd = NAN) const {
    vzero::TraceView v{t.data(), y.data(), nullptr, st.data(), static_cast<int>(t.size())};
    v.noise_sd = noise_sd;
    return v;
  }
};

// 0.1 + b·t at t = 0, dt, …, plus a disturbance d·exp(−t/τ).
Trace disturbed_line(int n, double dt, double b, double d, double tau) {
  Trace tr;
  for (int i = 0; i < n; ++i) {
    const double t = i * dt;
    tr.t.push_back(t);
    tr.y.push_back(0.1 + b * t + (tau > 0 ? d * std::exp(-t / tau) : 0.0));
  }
  tr.st.assign(tr.t.size(), ReadStatus::ok);
  return tr;
}

}  // namespace

TEST_CASE("a start that decays over three reads is found, fitted and set aside") {
  // 20 reads 10 s apart, 0.001 AU/s, and −0.05 AU · exp(−t/10 s) on top: the decay that is
  // down to 5 % after 3 reads (τ = Δt = 3·Δt/3). The model of screen_start holds it exactly,
  // so the fitted offset is −0.05 and the decay 3 reads. With read noise 0.001 AU the
  // disturbance at reads 0…4 is 0.05·e^(−i) = 0.05, 0.0184, 0.00677, 0.00249, 0.000916 AU:
  // the first four are above one noise SD, so four reads are set aside.
  const Trace tr = disturbed_line(20, 10, 0.001, -0.05, 10);
  const auto s = vzero::detail::screen_start(tr.t.data(), tr.y.data(), 20, 5, 0.001);
  CHECK(s.decay_reads == 3);
  CHECK(std::fabs(s.offset + 0.05) < 1e-9);
  CHECK(s.skip == 4);
  CHECK(s.z < -5);

  vzero::RateOptions opt;
  const auto r = vzero::find_rate(tr.view(0.001), opt);
  CHECK(has_flag(r, "disturbed"));
  CHECK(!has_flag(r, "lag"));
  CHECK(r.disturbed_reads == 4);
  CHECK(r.t_start_s == 40.0);
  CHECK(r.lag_s == 0.0);
  // What is left of the disturbance from read 4 on (≤ 0.000916 AU) is taken off as fitted;
  // the fit is exact here, so the slope is the line's own.
  CHECK(std::fabs(r.slope / 0.001 - 1) < 1e-9);
  // The spike screen holds read 0 (0.05 AU off its neighbours' line) out of the search, but
  // the start screen still sees the first three reads (a disturbed start's first read is what
  // the spike screen takes for a spike), so its fit starts at read 0: the offset is −0.05 AU.
  CHECK(std::fabs(r.disturbed_offset + 0.05) < 1e-9);
  // Without the check, the spike screen holds read 0 out alone and reads 1–3 (0.0184, 0.00677,
  // 0.00249 AU low) stay in the window and steepen it.
  opt.detect_disturbed = false;
  const auto kept = vzero::find_rate(tr.view(0.001), opt);
  CHECK(!has_flag(kept, "disturbed"));
  CHECK(kept.t_start_s == 10.0);
  MESSAGE("slope with the start kept: ", kept.slope);
  CHECK(kept.slope > 1.02 * 0.001);
}

TEST_CASE("a first read that jumps, either sign, is set aside; a smooth bend is not a disturbance") {
  // A jump of +0.02 AU on read 0 alone: exp(−t/τ) with τ = Δt/3 leaves e^(−3) = 5 % of it at
  // read 1 (0.000996 AU, just under the 0.001 AU noise SD), so exactly one read goes.
  for (double d : {0.02, -0.02}) {
    const Trace tr = disturbed_line(12, 30, 0.0005, d, 10);
    const auto s = vzero::detail::screen_start(tr.t.data(), tr.y.data(), 12, 5, 0.001);
    CHECK(s.decay_reads == 1);
    CHECK(std::fabs(s.offset - d) < 1e-9);
    CHECK(s.skip == 1);
  }
  // Depletion bends the trace smoothly: y = 0.001·t − 1e-6·t² over 110 s, a bend of 0.0121 AU.
  // Against 0.0001 AU of read noise the square term is clear, the smooth part of the model
  // holds the trace exactly, and no disturbance is fitted (offset 0 to rounding). Against
  // 0.001 AU the square term is not clear; a line and the decay share the bend, and the
  // decay's coefficient stays far from significant: nothing is set aside either way.
  Trace bend;
  for (int i = 0; i < 12; ++i) {
    bend.t.push_back(10.0 * i);
    bend.y.push_back(0.001 * 10 * i - 1e-6 * 100.0 * i * i);
  }
  bend.st.assign(12, ReadStatus::ok);
  const auto s = vzero::detail::screen_start(bend.t.data(), bend.y.data(), 12, 5, 0.0001);
  CHECK(std::fabs(s.offset) < 1e-9);
  CHECK(s.skip == 0);
  const auto noisy = vzero::detail::screen_start(bend.t.data(), bend.y.data(), 12, 5, 0.001);
  CHECK(noisy.skip == 0);
  CHECK(std::fabs(noisy.z) < 5);
}

TEST_CASE("a window rule is one entry in the table of rules") {
  // A straight 20-read line: the default rules accept every read and the window ends when
  // the reads run out. One more entry, "seven-reads", fails any candidate of more than seven
  // reads: the window is then the first seven reads and the rule's name is what ended it.
  const Trace tr = disturbed_line(20, 10, 0.001, 0, 0);
  vzero::RateOptions opt;
  const auto plain = vzero::find_rate(tr.view(0.001), opt);
  CHECK(plain.n_points == 20);
  CHECK(plain.window_end == "reads");

  std::vector<vzero::WindowRule> rules = vzero::default_window_rules();
  rules.push_back({"seven-reads", 1, false,
                   [](const vzero::WindowCandidate& c, const vzero::RateOptions&) { return c.n > 7 ? -1 : 0; }});
  opt.window_rules = &rules;
  const auto r = vzero::find_rate(tr.view(0.001), opt);
  CHECK(r.n_points == 7);
  CHECK(r.t_end_s == 60.0);
  CHECK(r.window_end == "seven-reads");
  CHECK(std::fabs(r.slope / 0.001 - 1) < 1e-9);
}

TEST_CASE("a rate too imprecise to trust is flagged imprecise") {
  // 10 noise-free reads 10 s apart at 0.001 AU/s: Σ(t − t̄)² = 100·82.5 = 8250 s², so read
  // noise σ alone gives a 95 % half-width of 1.96·σ/√8250 = 0.02158·σ AU/s. σ = 0.005 AU
  // gives 10.8 % of the rate (above the 10 % limit); σ = 0.004 AU gives 8.6 % (below). The
  // detection limit 3·σ/√8250 stays below the rate in both (0.000165 and 0.000132 AU/s).
  // (The limit is set to 10 % here; the default is 15 %.)
  const Trace tr = disturbed_line(10, 10, 0.001, 0, 0);
  vzero::RateOptions opt;
  opt.detect_disturbed = false;
  opt.precision_limit = 0.10;
  const auto wide = vzero::find_rate(tr.view(0.005), opt);
  CHECK(has_flag(wide, "imprecise"));
  CHECK(!has_flag(wide, "noise"));
  const auto narrow = vzero::find_rate(tr.view(0.004), opt);
  CHECK(!has_flag(narrow, "imprecise"));
  opt.precision_limit = 0;
  CHECK(!has_flag(vzero::find_rate(tr.view(0.005), opt), "imprecise"));
}

namespace {

// y = 0.001·t − 2e-6·t² at 8 reads 10 s apart: a parabola bending down exactly, its tangent
// at 0 is 0.001.
Trace exact_parabola() {
  Trace tr;
  for (int i = 0; i < 8; ++i) {
    tr.t.push_back(10.0 * i);
    tr.y.push_back(0.001 * 10 * i - 2e-6 * 100.0 * i * i);
  }
  tr.st.assign(8, ReadStatus::ok);
  return tr;
}

}  // namespace

TEST_CASE("the initial tangent needs enough reads for its second parameter") {
  // The exact parabola: `always` takes its tangent; `auto` does not with fewer than
  // tangent_min_reads (10) reads.
  const Trace tr = exact_parabola();
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::always;
  const auto a = vzero::find_rate(tr.view(1e-5), opt);
  CHECK(a.tangent == "parabola");
  CHECK(std::fabs(a.slope / 0.001 - 1) < 1e-9);
  opt.tangent = vzero::TangentMode::automatic;
  CHECK(vzero::find_rate(tr.view(1e-5), opt).tangent == "slope");
  opt.tangent_min_reads = 5;
  CHECK(vzero::find_rate(tr.view(1e-5), opt).tangent == "parabola");
}

TEST_CASE("the initial tangent's interval is at least what the read noise gives its slope") {
  // The exact parabola above (y = 0.001·t − 2e-6·t², 8 reads 10 s apart) fits its reads to
  // rounding, so its own residuals would claim an interval of zero width. The read noise
  // (1e-5) gives its starting slope the standard error σ·√[(XᵀX)⁻¹]₁₁, X = (1, t, t²) over
  // the reads it used (worked here by Cramer's rule); the interval is at least 1.96 times that
  // on each side — or the straight line's own floor over the window's reads, 1.96·σ/√Σ(t − t̄)²,
  // if larger (the same rule for both).
  const Trace tr = exact_parabola();
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::always;
  const double sd = 1e-5;
  const auto r = vzero::find_rate(tr.view(sd), opt);
  REQUIRE(r.tangent == "parabola");
  double m[3][3] = {};  // XᵀX over the parabola's reads
  std::vector<double> line_t;
  for (std::size_t i = 0; i < tr.t.size(); ++i) {
    if (!r.used[i]) continue;
    const double t = tr.t[i], p[3] = {1, t, t * t};
    for (int a = 0; a < 3; ++a)
      for (int b = 0; b < 3; ++b) m[a][b] += p[a] * p[b];
    if (t <= r.t_end_s) line_t.push_back(t);
  }
  const double det = m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1]) -
                     m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0]) +
                     m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0]);
  const double inv11 = (m[0][0] * m[2][2] - m[0][2] * m[2][0]) / det;  // cofactor (1,1) / det
  const double parabola_half = 1.959963984540054 * sd * std::sqrt(inv11);
  double mt = 0, stt = 0;
  for (double t : line_t) mt += t / static_cast<double>(line_t.size());
  for (double t : line_t) stt += (t - mt) * (t - mt);
  const double line_half = 1.959963984540054 * sd / std::sqrt(stt);
  const double half = std::max(parabola_half, line_half);
  CHECK(r.ci_high - r.slope == doctest::Approx(half).epsilon(1e-6));
  CHECK(r.slope - r.ci_low == doctest::Approx(half).epsilon(1e-6));
  CHECK(parabola_half > line_half);  // here the parabola's own floor is the wider
}

namespace {

// Least squares of y on (1, t/100, (t/100)², …) up to `degree`, by Householder QR (Eigen),
// over the reads `used`: the slope at t = 0 and the factor v of Var(slope) = σ²·v.
std::pair<double, double> poly_slope_at_0(const Trace& tr, const std::vector<unsigned char>& used, int degree) {
  std::vector<double> ts, ys;
  for (std::size_t i = 0; i < tr.t.size(); ++i)
    if (used[i]) ts.push_back(tr.t[i] / 100), ys.push_back(tr.y[i]);
  Eigen::MatrixXd x(static_cast<Eigen::Index>(ts.size()), degree + 1);
  Eigen::VectorXd y(static_cast<Eigen::Index>(ts.size()));
  for (Eigen::Index i = 0; i < x.rows(); ++i) {
    for (int k = 0; k <= degree; ++k) x(i, k) = std::pow(ts[static_cast<std::size_t>(i)], k);
    y(i) = ys[static_cast<std::size_t>(i)];
  }
  const Eigen::VectorXd b = x.householderQr().solve(y);
  const Eigen::MatrixXd inv = (x.transpose() * x).inverse();
  return {b(1) / 100, inv(1, 1) / 1e4};
}

}  // namespace

TEST_CASE("the initial tangent's interval holds the parabola's own bias, judged by a cubic") {
  // y = 0.001·t − 4e-6·t² + 1.2e-8·t³ at 20 reads 10 s apart (v0 = 0.001 at t = 0): no
  // parabola passes through these reads, and the one fitted starts at another slope. With a
  // read noise of 1e-7 its statistical interval is far narrower than that miss; the cubic over
  // the same reads starts at exactly 0.001, so the difference d of the two slopes, less what
  // noise alone would make of it (Var d = σ²·(v_cubic − v_parabola) for the nested fits, σ the
  // read noise: the cubic's residuals vanish here), widens the interval to
  // √(half² + d² − Var d), which holds v0.
  Trace tr;
  for (int i = 0; i < 20; ++i) {
    const double t = 10.0 * i;
    tr.t.push_back(t);
    tr.y.push_back(0.001 * t - 4e-6 * t * t + 1.2e-8 * t * t * t);
  }
  tr.st.assign(20, ReadStatus::ok);
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::always;
  opt.detect_lag = false;
  const double sd = 1e-7;
  const auto r = vzero::find_rate(tr.view(sd), opt);
  REQUIRE(r.tangent == "parabola");
  const auto [pslope, pv] = poly_slope_at_0(tr, r.used, 2);
  const auto [cslope, cv] = poly_slope_at_0(tr, r.used, 3);
  CHECK(r.slope == doctest::Approx(pslope).epsilon(1e-6));
  CHECK(cslope == doctest::Approx(0.001).epsilon(1e-6));
  // The parabola's residual SD, its statistical half-width (t(0.975, n − 3)·SE, the noise floor
  // being smaller here) and the bias term.
  int n = 0;
  double rss = 0;
  {
    std::vector<double> ts, ys;
    for (std::size_t i = 0; i < tr.t.size(); ++i)
      if (r.used[i]) ts.push_back(tr.t[i] / 100), ys.push_back(tr.y[i]);
    n = static_cast<int>(ts.size());
    Eigen::MatrixXd x(n, 3);
    Eigen::VectorXd y(n);
    for (int i = 0; i < n; ++i) x.row(i) << 1, ts[static_cast<std::size_t>(i)], ts[static_cast<std::size_t>(i)] * ts[static_cast<std::size_t>(i)];
    for (int i = 0; i < n; ++i) y(i) = ys[static_cast<std::size_t>(i)];
    rss = (y - x * x.householderQr().solve(y)).squaredNorm();
  }
  const double s = std::sqrt(rss / (n - 3));
  REQUIRE(s > sd);
  const double stat_half = vzero::detail::student_t_quantile(0.975, n - 3) * s * std::sqrt(pv);
  const double d = cslope - pslope;
  const double bias = std::sqrt(d * d - sd * sd * (cv - pv));
  CHECK(std::fabs(pslope - 0.001) > stat_half);  // the statistical interval alone misses v0
  CHECK(r.ci_high - r.slope == doctest::Approx(std::hypot(stat_half, bias)).epsilon(1e-5));
  CHECK(r.slope - r.ci_low == doctest::Approx(std::hypot(stat_half, bias)).epsilon(1e-5));
  CHECK(r.ci_low <= 0.001);
  CHECK(r.ci_high >= 0.001);
}

TEST_CASE("a window whose rate still rises is flagged rising") {
  // y = 1e-5·t² (a rate rising from zero) at t = 0, 10, …, 190 s; the lag check is off and
  // the only window rule ends the window at eight reads (t ≤ 70 s). Over those reads the
  // parabola holds exactly: square term 1e-5 AU/s², far beyond its SE from the 1e-4 AU read
  // noise, and the slope changes by 2·1e-5·70 = 0.0014 AU/s across the window, twice the
  // line's slope (0.0007 AU/s): a significant upward bend, so `rising`.
  Trace tr;
  for (int i = 0; i < 20; ++i) {
    tr.t.push_back(10.0 * i);
    tr.y.push_back(1e-5 * 100.0 * i * i);
  }
  tr.st.assign(20, ReadStatus::ok);
  const std::vector<vzero::WindowRule> rules = {
      {"eight-reads", 1, false,
       [](const vzero::WindowCandidate& c, const vzero::RateOptions&) { return c.n > 8 ? -1 : 0; }}};
  vzero::RateOptions opt;
  opt.detect_lag = false;
  opt.window_rules = &rules;
  const auto r = vzero::find_rate(tr.view(1e-4), opt);
  CHECK(r.n_points == 8);
  CHECK(r.window_end == "eight-reads");
  CHECK(has_flag(r, "rising"));
  // A straight line through the same reads is not rising.
  Trace line = disturbed_line(20, 10, 0.001, 0, 0);
  CHECK(!has_flag(vzero::find_rate(line.view(1e-4), opt), "rising"));
}

TEST_CASE("a trace at the detector's maximum is saturated, never noise or negative") {
  // Six reads at exactly 3.0 (the detector's top reading), then overflow: a plateau. No read
  // lies below it, so the rate comes from the plateau (slope 0, an interval holding 0) and
  // the flag is `saturated`, not `noise` or `negative`.
  Trace full;
  for (int i = 0; i < 10; ++i) full.t.push_back(30.0 * i);
  full.y.assign(10, 3.0);
  full.st.assign(10, ReadStatus::ok);
  for (int i = 6; i < 10; ++i) full.st[static_cast<std::size_t>(i)] = ReadStatus::overflow;
  vzero::RateOptions opt;
  const auto r = vzero::find_rate(full.view(0.001), opt);
  CHECK(has_flag(r, "saturated"));
  CHECK(has_flag(r, "overflow"));
  CHECK(!has_flag(r, "noise"));
  CHECK(!has_flag(r, "negative"));
  // Five rising reads (0.1 AU per 30 s), two at 3.0, then overflow: the window stops at the
  // plateau, the rate is 0.1/30 AU/s exactly, and nothing is flagged saturated.
  for (int i = 0; i < 5; ++i) full.y[static_cast<std::size_t>(i)] = 0.1 * i;
  full.st[6] = ReadStatus::ok;
  const auto s = vzero::find_rate(full.view(0.001), opt);
  CHECK(s.window_end == "saturated");
  CHECK(s.n_points == 5);
  CHECK(std::fabs(s.slope / (0.1 / 30) - 1) < 1e-12);
  CHECK(!has_flag(s, "saturated"));
}

TEST_CASE("the stated 95 % interval carries the read noise and the blanks' rate spread") {
  // A noise-free line 0.1 + 0.001·t, 20 reads 10 s apart: every pair slope is 0.001, so the
  // Theil–Sen interval alone has width 0. With read noise σ = 0.002 and a spread of the
  // blanks' rates of 5e-5 /s, each side of the stated interval is (closed form, worked here)
  // hypot(1.96·σ/√Σ(t − t̄)², 1.96·rate_sd); Σ(t − t̄)² = 100·Σ(i − 9.5)² = 100·665 = 66,500.
  const Trace tr = disturbed_line(20, 10, 0.001, 0, 0);
  vzero::TraceView v = tr.view(0.002);
  v.rate_sd = 5e-5;
  const double z = 1.959963984540054;  // standard normal 97.5 % quantile (common practice)
  const double side = std::hypot(z * 0.002 / std::sqrt(66500.0), z * 5e-5);
  vzero::RateOptions opt;
  const auto r = vzero::find_rate(v, opt);
  CHECK(r.slope == doctest::Approx(0.001).epsilon(1e-12));
  CHECK(r.ci_high - r.slope == doctest::Approx(side).epsilon(1e-9));
  CHECK(r.slope - r.ci_low == doctest::Approx(side).epsilon(1e-9));
  // side/slope = 9.9 %: precise enough at the default 15 %; twice the rate spread is not.
  CHECK(!has_flag(r, "imprecise"));
  // A spread estimated on 8 degrees of freedom (the 8 blank pairs of a 96-well plate) takes
  // Student's t quantile instead: t(0.975, 8) = 2.306 (NIST/SEMATECH e-Handbook of Statistical
  // Methods, 1.3.6.7.2, table of critical values of the t distribution; to its 3 decimals).
  v.rate_sd_dof = 8;
  const auto r8 = vzero::find_rate(v, opt);
  const double side8 = std::hypot(z * 0.002 / std::sqrt(66500.0), 2.306 * 5e-5);
  CHECK(r8.ci_high - r8.slope == doctest::Approx(side8).epsilon(2e-4));
  CHECK(r8.slope - r8.ci_low == doctest::Approx(side8).epsilon(2e-4));
  v.rate_sd_dof = 0;
  v.rate_sd = 1e-4;
  CHECK(has_flag(vzero::find_rate(v, opt), "imprecise"));
  // Without a noise estimate the interval is the estimator's own (width 0 here).
  const auto bare = vzero::find_rate(tr.view(), opt);
  CHECK(bare.ci_high - bare.ci_low == doctest::Approx(0).epsilon(1e-12));
}

namespace {

// Product of a reaction with a lag (hysteretic onset, from memory): P(t) = v·(t − τ·(1 −
// e^(−t/τ))), the rate v·(1 − e^(−t/τ)) rising from 0 to v; 60 reads 20 s apart.
Trace lag_curve(double v, double tau) {
  Trace tr;
  for (int i = 0; i < 60; ++i) {
    const double t = 20.0 * i;
    tr.t.push_back(t);
    tr.y.push_back(v * (t - tau * (1 - std::exp(-t / tau))));
  }
  tr.st.assign(tr.t.size(), ReadStatus::ok);
  return tr;
}

}  // namespace

TEST_CASE("a window followed by a steeper stretch is flagged rising") {
  // A rate that doubles at 600 s (0.0005 /s, then 0.001 /s; 60 reads 20 s apart), substrate
  // 1 (conc_per_signal 1): 10 % is converted at 200 s, so the conversion limit ends the
  // window there, and the lag shape is fitted up to twice that (400 s), where the trace is
  // still straight: no lag is seen. Of the blocks of the window's length after it, the one
  // from 600 s climbs at 0.001 against the window's 0.0005, ≈ 8 standard errors apart
  // (σ = 0.012: SE of an 11-read slope over 200 s = 0.012/√44,000 ≈ 5.7e-5; worked here).
  Trace tr = lag_curve(0.001, 160);
  for (std::size_t i = 0; i < tr.t.size(); ++i)
    tr.y[i] = tr.t[i] <= 600 ? 0.0005 * tr.t[i] : 0.3 + 0.001 * (tr.t[i] - 600);
  vzero::TraceView v = tr.view(0.012);
  v.substrate = 1;
  v.conc_per_signal = 1;
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::never;
  const auto r = vzero::find_rate(v, opt);
  CHECK(r.window_end == "conversion");
  CHECK(r.slope == doctest::Approx(0.0005).epsilon(1e-9));
  CHECK(has_flag(r, "rising"));
  CHECK(!has_flag(r, "lag"));

  // A first-order product curve P = 1 − e^(−t/600 s): its rate only falls, so nothing after
  // the window is steeper, whatever the noise.
  Trace fo = tr;
  for (std::size_t i = 0; i < fo.t.size(); ++i) fo.y[i] = 1 - std::exp(-fo.t[i] / 600);
  vzero::TraceView fv = fo.view(0.012);
  fv.substrate = 1;
  fv.conc_per_signal = 1;
  CHECK(!has_flag(vzero::find_rate(fv, opt), "rising"));
  // With the lag check off (--lag-check off) nothing is looked for.
  opt.detect_lag = false;
  CHECK(!has_flag(vzero::find_rate(v, opt), "rising"));
}

TEST_CASE("a lag too gentle for short blocks is recognised by its shape; the window starts after it") {
  // v = 0.001 /s, τ = 160 s, read noise 0.012 (as lag_curve above): 5-read blocks' slopes
  // differ by at most ≈ 0.00077 < 4·√2·0.012/√4000 = 0.0011, so the block scan sees nothing,
  // but the lag curve fits the reads far better than a line. The window starts where the
  // rate has reached 95 % of v (3τ = 480 s, within a grid step of τ) and its slope is near v.
  const Trace tr = lag_curve(0.001, 160);
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::never;
  const auto r = vzero::find_rate(tr.view(0.012), opt);
  CHECK(has_flag(r, "lag"));
  CHECK(r.t_start_s >= 360);
  CHECK(r.t_start_s <= 600);
  CHECK(std::fabs(r.slope / 0.001 - 1) < 0.1);
  CHECK(!has_flag(r, "rising"));
  // With substrate 1 (conc_per_signal 1), P(480 s) = 0.001·(480 − 160·(1 − e⁻³)) = 0.328:
  // a third is used before the window starts, so the rate it measures is not v0: depleted.
  vzero::TraceView v = tr.view(0.012);
  v.substrate = 1;
  v.conc_per_signal = 1;
  CHECK(has_flag(vzero::find_rate(v, opt), "depleted"));
  // The shape test itself (lag_model.hpp): the noise-free lag curve picks a τ within a grid
  // step (the grid's ratio is (τmax/τmin)^(1/23)) of 160 s; a curve that only bends down
  // (first order) and a straight line gain nothing.
  const double tau_max = 1180.0 / 3, ratio = std::pow(tau_max / 10.0, 1.0 / 23);
  const auto shape = vzero::detail::fit_lag_shape(tr.t.data(), tr.y.data(), 30, 0.001, tau_max);
  CHECK(shape.tau_s > 160 / ratio);
  CHECK(shape.tau_s < 160 * ratio);
  std::vector<double> fo(tr.t.size()), line(tr.t.size());
  for (std::size_t i = 0; i < tr.t.size(); ++i) {
    fo[i] = 1 - std::exp(-tr.t[i] / 600);
    line[i] = 0.2 + 0.001 * tr.t[i];
  }
  CHECK(vzero::detail::fit_lag_shape(tr.t.data(), fo.data(), 30, 0.001, tau_max).tau_s == 0);
  CHECK(vzero::detail::fit_lag_shape(tr.t.data(), line.data(), 30, 0.001, tau_max).gain < 1e-6);
}

TEST_CASE("a window after a lag that used much of the substrate is flagged depleted") {
  // The lag curve above with little read noise (1e-4), so the lag scan finds the lag and the
  // window starts after it. First with a substrate so large that no limit matters, to learn
  // where the window starts; then with a substrate of which 7 % is converted there (closed
  // form P(t_start) / 0.07): the window's middle then lies above 7 % converted, more than
  // half the 10 % limit (the most a window from the start ending at the limit has).
  const Trace tr = lag_curve(0.001, 160);
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::never;
  vzero::TraceView v = tr.view(1e-4);
  v.conc_per_signal = 1;
  v.substrate = 1e9;
  const auto free_run = vzero::find_rate(v, opt);
  REQUIRE(free_run.lag_s > 0);
  CHECK(!has_flag(free_run, "depleted"));
  const double t0 = free_run.t_start_s;
  const double p0 = 0.001 * (t0 - 160 * (1 - std::exp(-t0 / 160)));
  v.substrate = p0 / 0.07;
  const auto r = vzero::find_rate(v, opt);
  CHECK(r.lag_s > 0);
  CHECK(r.conversion > 0.07);
  CHECK(has_flag(r, "depleted"));
  // Without the lag check the window starts at the first read: the ordinary limit applies.
  opt.detect_lag = false;
  CHECK(!has_flag(vzero::find_rate(v, opt), "depleted"));
}

namespace {
// First-order progress (far below Km, the depletion bound's worst case; closed form):
// P(t) = S0·(1 − e^(−kt)), S0 = 100 µM, k = 1e-3 /s, so v0 = k·S0 = 0.1 µM/s; 60 reads 10 s
// apart, noiseless.
Trace first_order_trace() {
  Trace tr;
  for (int i = 0; i < 60; ++i) {
    tr.t.push_back(10.0 * i);
    tr.y.push_back(100.0 * -std::expm1(-1e-3 * 10.0 * i));
  }
  tr.st.assign(tr.t.size(), ReadStatus::ok);
  return tr;
}
}  // namespace

TEST_CASE("a straight line's depletion bias lies inside the interval's upper side") {
  // first_order_trace (closed form worked there), signal in µM (conc_per_signal 1). 10 % is
  // converted by −ln(0.9)/k = 105 s, so the window holds about the first 11 reads and its line
  // rates the reaction at about 5 % less substrate: below v0. The interval's upper side carries line·c/(1 − c), c the
  // conversion at the window's middle (at least half the conversion at its end).
  const Trace tr = first_order_trace();
  vzero::TraceView v = tr.view();
  v.substrate = 100;
  v.conc_per_signal = 1;
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::never;
  const auto r = vzero::find_rate(v, opt);
  REQUIRE(std::isfinite(r.conversion));
  CHECK(r.slope < 0.1);        // the line is low ...
  CHECK(r.slope > 0.1 * 0.9);  // ... by about half the conversion
  CHECK(r.ci_high >= 0.1);     // and the interval holds v0
  const double c = 0.5 * r.conversion;
  CHECK(r.ci_high - r.slope >= r.slope * c / (1 - c) * (1 - 1e-12));
  // Without the substrate nothing bounds the bias: the upper side is the estimator's own,
  // and it misses v0.
  vzero::TraceView bare = tr.view();
  const auto b = vzero::find_rate(bare, opt);
  CHECK(b.ci_high < 0.1);
}

TEST_CASE("imprecise judges the interval's wider side, not its mean half-width") {
  // first_order_trace (v0 = 0.1 µM/s, far below Km) with the conversion limit raised to 30 %
  // and the curvature test off: the window then runs to about 30 % converted and its line rates the reaction at about 15 % less substrate, so the
  // interval's upper side carries c/(1 − c) ≈ 18 % of the line (c the conversion at the
  // window's middle) while its lower side is the estimator's own, near zero. The mean of
  // the two sides is under the 15 % limit, the upper side over it: "within ±15 %" does not
  // hold, and the well is flagged.
  const Trace tr = first_order_trace();
  vzero::TraceView v = tr.view();
  v.substrate = 100;
  v.conc_per_signal = 1;
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::never;
  opt.max_conversion = 0.3;
  opt.linearity_alpha = 0;  // no curvature test: the conversion limit alone ends the window
  const auto r = vzero::find_rate(v, opt);
  REQUIRE(std::isfinite(r.conversion));
  CHECK(r.window_end == "conversion");
  const double c = 0.5 * r.conversion;
  const double up = r.ci_high - r.slope, down = r.slope - r.ci_low;
  CHECK(up >= r.slope * c / (1 - c) * (1 - 1e-12));
  CHECK(up > 0.15 * r.slope);
  CHECK(0.5 * (up + down) < 0.15 * r.slope);
  CHECK(has_flag(r, "imprecise"));
  // A limit above the wider side leaves the well unflagged.
  opt.precision_limit = 1.01 * up / r.slope;
  CHECK(!has_flag(vzero::find_rate(v, opt), "imprecise"));
}

TEST_CASE("an 8-read trace: a first read the spike screen holds out still opens a disturbed start") {
  // 8 reads 45 s apart (a screening plate), 2.8e-4 AU/s, and −0.03 AU · exp(−t/45 s): down to
  // 5 % after three reads (0.03·e^(−i) = 0.03, 0.0110, 0.00406, 0.00149 AU at reads 0…3).
  // Read noise 0.002 AU. The spike screen holds read 0 out (15 noise SDs off its neighbours'
  // line); alone, reads 1–7 do not show the rest of the dip to the start screen, which needs
  // the first read. Screened with read 0, the model holds the trace exactly: offset −0.03,
  // reads 0 and 1 above one noise SD are set aside, the rest of the dip taken off, and the
  // slope is the line's own. Kept, reads 1 and 2 (0.011 and 0.004 AU low) steepen the line.
  const Trace tr = disturbed_line(8, 45, 2.8e-4, -0.03, 45);
  vzero::RateOptions opt;
  const auto r = vzero::find_rate(tr.view(0.002), opt);
  CHECK(has_flag(r, "disturbed"));
  CHECK(std::fabs(r.disturbed_offset + 0.03) < 1e-9);
  CHECK(r.t_start_s >= 90.0);
  CHECK(std::fabs(r.slope / 2.8e-4 - 1) < 1e-9);
  opt.detect_disturbed = false;
  const auto kept = vzero::find_rate(tr.view(0.002), opt);
  MESSAGE("slope with the start kept: ", kept.slope);
  CHECK(kept.slope > 1.05 * 2.8e-4);
}

namespace {

// Least-squares fit of y on x: its residual sum of squares and slope (a plain textbook
// regression, written here apart from the library's).
std::pair<double, double> rss_and_slope(const std::vector<double>& x, const std::vector<double>& y) {
  const double n = static_cast<double>(x.size());
  double mx = 0, my = 0;
  for (std::size_t i = 0; i < x.size(); ++i) mx += x[i] / n, my += y[i] / n;
  double sxx = 0, sxy = 0;
  for (std::size_t i = 0; i < x.size(); ++i) sxx += (x[i] - mx) * (x[i] - mx), sxy += (x[i] - mx) * (y[i] - my);
  const double b = sxy / sxx;
  double rss = 0;
  for (std::size_t i = 0; i < x.size(); ++i) rss += std::pow(y[i] - my - b * (x[i] - mx), 2);
  return {rss, b};
}

double lag_clock(double u, double tau) { return u - tau * (1 - std::exp(-u / tau)); }

}  // namespace

TEST_CASE("the lag shape reports the largest time constant its profile allows") {
  // The noise-free lag curve (v = 0.001 /s, τ = 160 s; 30 reads 20 s apart) judged at read
  // noise 0.01: every τ of the grid (10 s · ratio^k, k = 0 … 23, ratio = (τmax/10)^(1/23))
  // is fitted here by least squares of y on its clock; the largest τ whose RSS lies within
  // 3.84 σ² (χ²₁ at 5 %, common practice for a one-parameter profile interval) of the best
  // is what fit_lag_shape must report as tau_high_s.
  const Trace tr = lag_curve(0.001, 160);
  const std::vector<double> t(tr.t.begin(), tr.t.begin() + 30), y(tr.y.begin(), tr.y.begin() + 30);
  const double tau_max = 1180.0 / 3, ratio = std::pow(tau_max / 10.0, 1.0 / 23), sd = 0.01;
  std::vector<double> tau, rss;
  for (int k = 0; k < 24; ++k) {
    tau.push_back(10.0 * std::pow(ratio, k));
    std::vector<double> g;
    for (double x : t) g.push_back(lag_clock(x, tau.back()));
    const auto [r, b] = rss_and_slope(g, y);
    rss.push_back(b > 0 ? r : INFINITY);
  }
  const double best = *std::min_element(rss.begin(), rss.end());
  double expect = 0;
  for (std::size_t k = 0; k < tau.size(); ++k)
    if (rss[k] <= best + 3.841458820694124 * sd * sd) expect = std::max(expect, tau[k]);
  const auto shape = vzero::detail::fit_lag_shape(t.data(), y.data(), 30, sd, tau_max);
  CHECK(shape.tau_high_s == doctest::Approx(expect).epsilon(1e-9));
  CHECK(shape.tau_high_s > shape.tau_s);  // at this noise the band holds more than the best τ
  // With little noise the band holds the best τ alone.
  const auto sharp = vzero::detail::fit_lag_shape(t.data(), y.data(), 30, 1e-6, tau_max);
  CHECK(sharp.tau_high_s == sharp.tau_s);
  // A straight line: no τ beats the line, so none is reported.
  std::vector<double> line;
  for (double x : t) line.push_back(0.2 + 0.001 * x);
  CHECK(vzero::detail::fit_lag_shape(t.data(), line.data(), 30, sd, tau_max).tau_high_s == 0);
}

TEST_CASE("a lag too weak to skip widens the interval's upper side (note lag-possible)") {
  // v = 0.001 /s, τ = 40 s, 60 reads 20 s apart, read noise 0.015: the 5-read blocks' slopes
  // differ by far less than the block scan's 4 standard errors, and the lag curve fits the
  // first half of the reads better than a line by more than 3.84 but less than 9 noise
  // variances, so the window stays at the first read (found by running it) and the note says
  // a lag may be present. Its upper side then carries, in quadrature with the interval the
  // noise gives, what a lag of the largest τ the reads allow would take off a straight line
  // over the window's reads: slope · (1/ratio − 1), ratio the least-squares slope of that
  // lag's clock against t over those reads (computed here).
  const Trace tr = lag_curve(0.001, 40);
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::never;
  const auto r = vzero::find_rate(tr.view(0.015), opt);
  REQUIRE(has_flag(r, "lag-possible"));
  CHECK(!has_flag(r, "lag"));
  CHECK(r.t_start_s == 0);
  CHECK(r.slope == doctest::Approx(0.001).epsilon(0.01));
  // The same reads without the lag tests: same slope and lower side, a narrower upper side.
  vzero::RateOptions off = opt;
  off.detect_lag = false;
  const auto plain = vzero::find_rate(tr.view(0.015), off);
  CHECK(plain.slope == r.slope);
  CHECK(plain.ci_low == r.ci_low);
  CHECK(!has_flag(plain, "lag-possible"));
  // The shape is fitted to the first half of the reads (no substrate, so no conversion limit
  // to bound it: 30 reads) with τ up to a third of the run (1180 s / 3), as lag_search.cpp does.
  const auto shape = vzero::detail::fit_lag_shape(tr.t.data(), tr.y.data(), 30, 0.015, 1180.0 / 3);
  CHECK(shape.gain > 3.841458820694124);
  CHECK(shape.gain < 9);
  std::vector<double> used_t, g;
  for (std::size_t i = 0; i < tr.t.size(); ++i)
    if (r.used[i] && tr.t[i] <= r.t_end_s) {
      used_t.push_back(tr.t[i]);
      g.push_back(lag_clock(tr.t[i], shape.tau_high_s));
    }
  const double ratio = rss_and_slope(used_t, g).second;
  CHECK(ratio < 1);
  const double widened = r.slope + std::hypot(plain.ci_high - plain.slope, r.slope * (1 / ratio - 1));
  CHECK(r.ci_high == doctest::Approx(widened).epsilon(1e-9));
  // A straight line with the same noise level: no lag to suspect.
  Trace line = tr;
  for (std::size_t i = 0; i < line.t.size(); ++i) line.y[i] = 0.001 * line.t[i];
  CHECK(!has_flag(vzero::find_rate(line.view(0.015), opt), "lag-possible"));
}

TEST_CASE("the interval's read noise: the blanks', or the well's own scatter where larger on 14 reads or more") {
  // 0.1 + 0.001·t at 10 s intervals plus ±s alternating read by read (s = 0.002 AU: noise of
  // the well's own, as when it grows with the signal). The blanks claim s/10. The spike
  // screen's robust scatter of the well (u.local_sd) is then far above the blanks' noise: on
  // 20 reads the interval is judged on it, on 13 reads (fewer than two spike-screen
  // neighbourhoods, where a curve would inflate it) on the blanks' noise.
  constexpr double s = 0.002;
  vzero::RateOptions opt;
  opt.detect_disturbed = false;
  opt.detect_lag = false;
  const auto trace = [&](int n) {
    Trace tr = disturbed_line(n, 10, 0.001, 0, 0);
    for (int i = 0; i < n; ++i) tr.y[static_cast<std::size_t>(i)] += i % 2 ? -s : s;
    return tr;
  };
  const Trace long_trace = trace(20), short_trace = trace(13);
  const vzero::detail::Usable u20 = vzero::detail::usable_reads(long_trace.view(s / 10), opt);
  const vzero::detail::Usable u13 = vzero::detail::usable_reads(short_trace.view(s / 10), opt);
  REQUIRE(u20.local_sd > s / 2);
  REQUIRE(u13.local_sd > s / 2);
  CHECK(vzero::detail::interval_noise(u20, s / 10) == u20.local_sd);
  CHECK(vzero::detail::interval_noise(u13, s / 10) == s / 10);
  CHECK(vzero::detail::interval_noise(u20, 10 * s) == 10 * s);  // the blanks' noise when larger
  CHECK(std::isnan(vzero::detail::interval_noise(u20, NAN)));   // no blanks: no floor of either kind
  // The rate's interval on 20 reads: each side at least 1.96·local_sd/√Σ(t − t̄)² over the reads used.
  const auto r = vzero::find_rate(long_trace.view(s / 10), opt);
  std::vector<double> used_t;
  for (std::size_t i = 0; i < long_trace.t.size(); ++i)
    if (r.used[i]) used_t.push_back(long_trace.t[i]);
  double mt = 0, stt = 0;
  for (double t : used_t) mt += t / static_cast<double>(used_t.size());
  for (double t : used_t) stt += (t - mt) * (t - mt);
  const double floor = 1.959963984540054 * u20.local_sd / std::sqrt(stt);
  CHECK(r.slope - r.ci_low >= floor * (1 - 1e-12));
  CHECK(r.ci_high - r.slope >= floor * (1 - 1e-12));
}
