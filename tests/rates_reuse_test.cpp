// Tests of what the rate finder's fits reuse from one well to the next on the same thread
// (src/core/start_screen.cpp: the designs of the first reads' times; src/rates/lag_model.cpp:
// the lag curve's stretched clocks; src/rates/spike_screen.cpp: the spike screen's residual
// scales; src/rates/rate_window.cpp: the usable reads). Each fit is run after others that filled those stores
// and again alone in a fresh thread (empty stores): the results must be the same bit for bit
// (the determinism rule), and must match the closed forms the traces are built from.
#include <cmath>
#include <cstring>
#include <thread>
#include <vector>

#include "rates/lag_model.hpp"
#include "rates/rate_window.hpp"
#include "core/start_screen.hpp"
#include "test_support.hpp"

namespace {

using vzero::detail::LagShape;
using vzero::detail::StartScreen;

template <class F>
auto in_fresh_thread(F f) {
  decltype(f()) out{};
  std::thread th([&] { out = f(); });
  th.join();
  return out;
}

bool same_bits(double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; }
bool same(const LagShape& a, const LagShape& b) {
  return same_bits(a.tau_s, b.tau_s) && same_bits(a.slope, b.slope) && same_bits(a.gain, b.gain);
}
bool same(const StartScreen& a, const StartScreen& b) {
  return a.skip == b.skip && same_bits(a.offset, b.offset) && same_bits(a.z, b.z) && a.decay_reads == b.decay_reads &&
         same_bits(a.decay_tau_s, b.decay_tau_s);
}

// y = 0.2 + v·g_τ(t − t₀), g_τ(u) = u − τ·(1 − e^(−u/τ)) (lag_model.hpp), at the given times.
std::vector<double> lag_curve(const std::vector<double>& t, double v, double tau) {
  std::vector<double> y;
  for (double ti : t) {
    const double u = ti - t[0];
    y.push_back(0.2 + v * (u - tau * (1 - std::exp(-u / tau))));
  }
  return y;
}

}  // namespace

TEST_CASE("the lag fit gives the same numbers whatever stretches the thread fitted before") {
  // Reads 10 s apart from 0 s; the grid runs from half the read interval (5 s) to τ_max =
  // 200 s in k_lag_grid log-spaced steps (lag_model.hpp), so its 13th value is
  // τ = 5·40^(12/23) s. A noise-free lag curve with that τ is fitted exactly: the fit returns
  // that τ and v (closed form of the model).
  const double tau_max = 200, v = 0.002;
  const double tau = 5 * std::pow(tau_max / 5, 12 / static_cast<double>(vzero::detail::k_lag_grid - 1));
  std::vector<double> full, holed;
  for (int i = 0; i < 60; ++i) full.push_back(10.0 * i);
  for (int i = 0; i < 60; ++i)
    if (i != 7) holed.push_back(10.0 * i);  // a read the spike screen held out
  const std::vector<double> y_full = lag_curve(full, v, tau), y_holed = lag_curve(holed, v, tau);
  const double sd = 1e-4;
  struct Call {
    const std::vector<double>* t;
    const std::vector<double>* y;
    int n;
  };
  // Stretches sharing their first read: shorter, with a hole, then longer than the last.
  const std::vector<Call> calls{{&holed, &y_holed, 40}, {&full, &y_full, 30}, {&full, &y_full, 60},
                                {&holed, &y_holed, 59}, {&full, &y_full, 20}};
  for (const Call& c : calls) {
    const LagShape seq = vzero::detail::fit_lag_shape(c.t->data(), c.y->data(), c.n, sd, tau_max);
    const LagShape alone =
        in_fresh_thread([&] { return vzero::detail::fit_lag_shape(c.t->data(), c.y->data(), c.n, sd, tau_max); });
    CHECK(same(seq, alone));
    CHECK_REL(seq.tau_s, tau, 1e-12);
    CHECK_REL(seq.slope, v, 1e-9);
    CHECK(seq.gain > 9);
    const LagShape dep = vzero::detail::fit_lag_depletion_shape(c.t->data(), c.y->data(), c.n, sd, tau_max);
    const LagShape dep_alone = in_fresh_thread(
        [&] { return vzero::detail::fit_lag_depletion_shape(c.t->data(), c.y->data(), c.n, sd, tau_max); });
    CHECK(same(dep, dep_alone));
  }
}

TEST_CASE("the start screen gives the same numbers whatever traces the thread screened before") {
  // 20 reads 10 s apart, 0.001 AU/s, plus d·exp(−t/10 s): the decay of 3 reads (τ = Δt), which
  // screen_start's model holds exactly, so the fitted offset is d (start_screen.hpp).
  std::vector<double> t;
  for (int i = 0; i < 20; ++i) t.push_back(10.0 * i);
  std::vector<double> t_late(t);
  for (double& x : t_late) x += 5;  // other times: the designs are made anew
  for (const double d : {-0.05, 0.03, -0.02, 0.05}) {
    for (const std::vector<double>* times : {&t, &t_late, &t}) {
      std::vector<double> y;
      for (double ti : *times) y.push_back(0.1 + 0.001 * ti + d * std::exp(-(ti - (*times)[0]) / 10));
      const StartScreen seq = vzero::detail::screen_start(times->data(), y.data(), 20, 5, 0.001);
      const StartScreen alone =
          in_fresh_thread([&] { return vzero::detail::screen_start(times->data(), y.data(), 20, 5, 0.001); });
      CHECK(same(seq, alone));
      CHECK(seq.decay_reads == 3);
      CHECK(std::fabs(seq.offset - d) < 1e-9);
    }
  }
}

TEST_CASE("the spike screen gives the same numbers whatever read times the thread screened before") {
  // A straight line, 0.1 + 0.001·t, with one read 0.5 too high: every neighbour line is the
  // line itself (the Theil–Sen slope of six exact reads and at most one spike is exact), so
  // that read alone is a spike (spike_screen.cpp's rule, outlier_k robust SDs, the floor
  // noise_sd = 0.001).
  std::vector<double> t;
  for (int i = 0; i < 30; ++i) t.push_back(10.0 * i);
  std::vector<double> t_late(t), t_holed;
  for (double& x : t_late) x += 5;  // other times: the scales are worked out anew
  for (int i = 0; i < 30; ++i)
    if (i != 4) t_holed.push_back(10.0 * i);
  const vzero::RateOptions opt;
  for (const std::vector<double>* times : {&t, &t_late, &t_holed, &t}) {
    std::vector<double> y;
    for (double ti : *times) y.push_back(0.1 + 0.001 * ti);
    y[12] += 0.5;
    vzero::TraceView tr;
    tr.time_s = times->data();
    tr.y = y.data();
    tr.n = static_cast<int>(times->size());
    tr.noise_sd = 0.001;
    const auto screen = [&] { return vzero::detail::usable_reads(tr, opt); };
    const vzero::detail::Usable seq = screen();
    const vzero::detail::Usable alone = in_fresh_thread(screen);
    CHECK(seq.spike == alone.spike);
    CHECK(same_bits(seq.local_sd, alone.local_sd));
    std::vector<char> expected(times->size(), 0);
    expected[12] = 1;
    CHECK(seq.spike == expected);
  }
}

TEST_CASE("usable reads filled into a Usable used before equal those of a new one") {
  // The rate finder keeps one Usable per thread. A long trace that overflows at its end
  // (truncated_by "overflow", a spike, a robust SD) is screened into it first; then short
  // traces whose spike screen sets no SD (fewer than 7 reads) and whose end is clean: every
  // field must be what a new Usable gets, worked out by hand for the short trace.
  std::vector<double> t, y;
  for (int i = 0; i < 30; ++i) {
    t.push_back(10.0 * i);
    y.push_back(0.1 + 0.001 * t.back());
  }
  y[12] += 0.5;
  std::vector<vzero::ReadStatus> st(30, vzero::ReadStatus::ok);
  st[29] = vzero::ReadStatus::overflow;
  vzero::TraceView long_tr;
  long_tr.time_s = t.data();
  long_tr.y = y.data();
  long_tr.status = st.data();
  long_tr.n = 30;
  long_tr.noise_sd = 0.001;
  const vzero::RateOptions opt;
  vzero::detail::Usable u;
  vzero::detail::usable_reads_into(long_tr, opt, NAN, u);
  REQUIRE(u.truncated_by == "overflow");
  REQUIRE(u.any_overflow);
  REQUIRE(std::isfinite(u.local_sd));
  REQUIRE(u.t.size() == 29);
  const std::vector<double> ts{0, 10, 20, 30, 40}, ys{0.1, 0.2, 0.3, 0.4, 0.5};
  vzero::TraceView short_tr;
  short_tr.time_s = ts.data();
  short_tr.y = ys.data();
  short_tr.n = 5;
  vzero::detail::usable_reads_into(short_tr, opt, NAN, u);
  const vzero::detail::Usable fresh = vzero::detail::usable_reads(short_tr, opt);
  CHECK(u.idx == std::vector<int>{0, 1, 2, 3, 4});
  CHECK(u.t == ts);
  CHECK(u.y == ys);
  CHECK(u.spike == std::vector<char>(5, 0));
  CHECK(std::isnan(u.local_sd));
  CHECK(!u.any_overflow);
  CHECK(!u.any_ceiling);
  CHECK(!u.any_saturated);
  CHECK(u.truncated_by.empty());
  CHECK(u.idx == fresh.idx);
  CHECK(u.spike == fresh.spike);
  CHECK(std::isnan(fresh.local_sd));
}
