// Tests of the lag shapes of the rate finder (src/rates/lag_model.hpp): a lag while substrate
// runs out (an S-shaped progress curve), and a ramp too long for the reads. Every trace is
// constructed here; the expected values are worked out beside each check (closed forms).
#include <algorithm>
#include <cmath>
#include <vector>

#include "rates/lag_model.hpp"
#include "test_support.hpp"
#include "vzero/rates.hpp"

namespace {

using vzero::ReadStatus;

bool has_flag(const vzero::RateResult& r, const char* f) {
  return std::find(r.flags.begin(), r.flags.end(), f) != r.flags.end();
}

// g_τ(t) = t − τ·(1 − e^(−t/τ)), the lag's stretched clock (lag_model.hpp).
double stretched(double t, double tau) { return t - tau * (1 - std::exp(-t / tau)); }

}  // namespace

TEST_CASE("a lag while substrate runs out is found by its shape against a parabola") {
  // 40 reads 20 s apart of y = v·g − q·g², v = 0.001 /s, τ = 120 s, q = 6e-7 /s²: the rate
  // v − 2q·g rises from 0 to 0.00058 /s around t ≈ 300 s and falls to 0.00011 /s at 780 s
  // (2q·g(780) = 2·6e-7·(780 − 120·(1 − e^(−6.5))) = 0.000792): an S-shaped curve. The model
  // holds it exactly, so the fit picks τ within a grid step (ratio (τmax/τmin)^(1/23),
  // τmin = half the read interval = 10 s, τmax = 780/3 = 260 s) and v within that step's
  // error; the parabola (τ → 0) leaves a large residual, so the gain is large.
  std::vector<double> t, y, parabola;
  for (int i = 0; i < 40; ++i) {
    const double ti = 20.0 * i, g = stretched(ti, 120);
    t.push_back(ti);
    y.push_back(0.001 * g - 6e-7 * g * g);
    parabola.push_back(0.2 + 0.001 * ti - 6e-7 * ti * ti);
  }
  const double tau_max = 780.0 / 3, ratio = std::pow(tau_max / 10.0, 1.0 / 23);
  const auto s = vzero::detail::fit_lag_depletion_shape(t.data(), y.data(), 40, 0.001, tau_max);
  CHECK(s.tau_s > 120 / ratio);
  CHECK(s.tau_s < 120 * ratio);
  CHECK(s.gain > 9);
  CHECK(std::fabs(s.slope / 0.001 - 1) < 0.1);
  // A parabola that only bends down (substrate used, no lag) is its own τ → 0 limit: no gain.
  const auto none = vzero::detail::fit_lag_depletion_shape(t.data(), parabola.data(), 40, 0.001, tau_max);
  CHECK(none.gain < 1e-6);
  CHECK(none.tau_s == 0);
  // Too few reads for four parameters and a test (fewer than 7): nothing is fitted.
  CHECK(vzero::detail::fit_lag_depletion_shape(t.data(), y.data(), 6, 0.001, tau_max).gain == 0);
}

TEST_CASE("a lag on an 8-read plate that outlasts the reads is flagged rising") {
  // 8 reads 60 s apart of v·g_τ(t), v = 0.001 /s, τ = 150 s, read noise 1e-5: the window
  // needs 5 reads, so its start may move at most (8 − 5)/2 = 1 read (60 s); the rate reaches
  // 95 % of v only at 3τ = 450 s, after the last read (420 s). The window sits in the ramp:
  // its slope is below v, and the well is flagged rising (and the lag noted).
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::never;
  std::vector<double> t, y;
  for (int i = 0; i < 8; ++i) {
    t.push_back(60.0 * i);
    y.push_back(0.001 * stretched(60.0 * i, 150));
  }
  const std::vector<ReadStatus> st(8, ReadStatus::ok);
  vzero::TraceView v{t.data(), y.data(), nullptr, st.data(), 8};
  v.noise_sd = 1e-5;
  const auto r = vzero::find_rate(v, opt);
  CHECK(has_flag(r, "rising"));
  CHECK(r.slope < 0.001);
  // The same reads with τ = 20 s: 3τ = 60 s, so a window from the second read (60 s) is past
  // the ramp; the rate there is v·(1 − e^(−3)) = 0.95·v or more, and nothing is flagged rising.
  for (int i = 0; i < 8; ++i) y[static_cast<std::size_t>(i)] = 0.001 * stretched(60.0 * i, 20);
  const auto quick = vzero::find_rate(v, opt);
  CHECK(!has_flag(quick, "rising"));
  CHECK(quick.slope > 0.95 * 0.001);
}

TEST_CASE("after a lag, the initial tangent answers for the substrate used; the line is flagged depleted") {
  // v·g_τ(t), v = 0.001 /s, τ = 160 s, 60 reads 20 s apart, read noise 1e-4: the lag scan
  // finds the lag. First with a substrate so large that no limit matters, to learn where the
  // window starts (t0); then with a substrate of which 7 % is converted there (the closed
  // form P(t0) / 0.07, conc_per_signal 1): the window's middle lies past 7 %, more than half
  // the 10 % limit. The straight line is then flagged depleted; the parabola's slope at
  // reaction start (the initial tangent, here always taken) is not.
  std::vector<double> t, y;
  for (int i = 0; i < 60; ++i) {
    t.push_back(20.0 * i);
    y.push_back(0.001 * stretched(20.0 * i, 160));
  }
  const std::vector<ReadStatus> st(t.size(), ReadStatus::ok);
  vzero::TraceView v{t.data(), y.data(), nullptr, st.data(), 60};
  v.noise_sd = 1e-4;
  v.conc_per_signal = 1;
  v.substrate = 1e9;
  vzero::RateOptions opt;
  opt.tangent = vzero::TangentMode::never;
  const auto free_run = vzero::find_rate(v, opt);
  REQUIRE(free_run.lag_s > 0);
  v.substrate = 0.001 * stretched(free_run.t_start_s, 160) / 0.07;
  const auto line = vzero::find_rate(v, opt);
  REQUIRE(line.lag_s > 0);
  CHECK(line.conversion > 0.07);
  CHECK(has_flag(line, "depleted"));
  opt.tangent = vzero::TangentMode::always;
  const auto tangent = vzero::find_rate(v, opt);
  REQUIRE(tangent.lag_s > 0);
  CHECK(tangent.tangent == "parabola");
  CHECK(!has_flag(tangent, "depleted"));
}
