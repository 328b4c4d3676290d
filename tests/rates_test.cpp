// Tests of the rate finder (include/vzero/rates.hpp) and its estimators (src/rates/robust.hpp).
// Reference values and their sources are in /work/shared/REFERENCES.md; each check names its
// source beside it.
#include <Eigen/Dense>
#include <cstring>
#include <thread>

#include "core/stats.hpp"
#include "rates/robust.hpp"
#include "rates/window_stats.hpp"
#include "sim/plate_sim.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/rates.hpp"
#include "vzero/settings.hpp"

namespace {

using vzero::ReadStatus;

// NIST StRD Norris (REFERENCES §1).
const double norris_x[] = {0.2, 337.4, 118.2, 884.6, 10.1,  226.5, 666.3, 996.3, 448.6, 777.0, 558.2, 0.4,
                           0.6, 775.5, 666.9, 338.0, 447.5, 11.6,  556.0, 228.1, 995.8, 887.6, 120.2, 0.3,
                           0.3, 556.8, 339.1, 887.2, 999.0, 779.0, 11.1,  118.3, 229.2, 669.1, 448.9, 0.5};
const double norris_y[] = {0.1, 338.8, 118.1, 888.0, 9.2,   228.1, 668.5, 998.5, 449.1, 778.9, 559.2, 0.3,
                           0.1, 778.1, 668.8, 339.3, 448.9, 10.8,  557.7, 228.3, 998.0, 888.8, 119.6, 0.3,
                           0.6, 557.6, 339.3, 888.0, 998.5, 778.9, 10.2,  117.6, 228.9, 668.4, 449.2, 0.2};

// Synthetic trace with two spikes (REFERENCES §3): 0.002·t + 0.05 AU, spikes at t = 45 s, 180 s.
const double robust_t_s[] = {0, 15, 30, 45, 60, 75, 90, 105, 120, 135, 150, 165, 180, 195, 210};
const double robust_y[] = {0.0510, 0.0792, 0.1105, 0.4388, 0.1707, 0.2000, 0.2296, 0.2609,
                           0.2894, 0.3203, 0.3490, 0.3806, 0.6598, 0.4411, 0.4693};

// Integrated Michaelis–Menten progress curve (REFERENCES §5): S0 = 100 µM, Km = 50 µM,
// Vmax = 10 µM/min, t = 0, 0.5, …, 10 min.
const double mm_progress_P_uM[] = {0.0,
                                   3.314607337890237,
                                   6.590919048890015,
                                   9.827638840971858,
                                   13.023429557141199,
                                   16.176913775128895,
                                   19.286674795530573,
                                   22.351258078284815,
                                   25.36917319247091,
                                   28.33889634912326,
                                   31.258873590818837,
                                   34.127524714845904,
                                   36.943248008382156,
                                   39.70442587379613,
                                   42.40943141936712,
                                   45.056636084756086,
                                   47.6444183607739,
                                   50.171173648686505,
                                   52.63532528480666,
                                   55.03533673087366,
                                   57.36972489931373};

bool has_flag(const vzero::RateResult& r, const char* f) {
  return std::find(r.flags.begin(), r.flags.end(), f) != r.flags.end();
}

// A trace with its own storage.
struct Trace {
  std::vector<double> t, y;
  std::vector<ReadStatus> st;
  vzero::TraceView view(double substrate = NAN, double conc_per_signal = NAN, double noise_sd = NAN) const {
    vzero::TraceView v{t.data(), y.data(), nullptr, st.data(), static_cast<int>(t.size())};
    v.substrate = substrate;
    v.conc_per_signal = conc_per_signal;
    v.noise_sd = noise_sd;
    return v;
  }
};

Trace robust_trace() {
  Trace tr;
  tr.t.assign(std::begin(robust_t_s), std::end(robust_t_s));
  tr.y.assign(std::begin(robust_y), std::end(robust_y));
  tr.st.assign(tr.t.size(), ReadStatus::ok);
  return tr;
}

// Line a + b·t plus seeded normal noise (invented data with a known truth).
Trace noisy_line(int n, double dt, double a, double b, double sd, std::uint64_t seed) {
  vzero::sim::Rng rng(seed);
  Trace tr;
  for (int i = 0; i < n; ++i) {
    tr.t.push_back(i * dt);
    tr.y.push_back(a + b * i * dt + sd * rng.normal());
  }
  tr.st.assign(tr.t.size(), ReadStatus::ok);
  return tr;
}

}  // namespace

TEST_CASE("OLS matches the NIST StRD Norris certified values") {
  // Certified values: NIST StRD Norris (REFERENCES §1), tolerances from there.
  const auto f = vzero::detail::least_squares_line(norris_x, norris_y, 36);
  CHECK_REL(f.intercept, -0.262323073774029, 1e-9);
  CHECK_REL(f.slope, 1.00211681802045, 1e-9);
  CHECK_REL(f.intercept_se, 0.232818234301152, 1e-8);
  CHECK_REL(f.slope_se, 0.429796848199937e-3, 1e-8);
  CHECK_REL(f.resid_sd, 0.884796396144373, 1e-9);
  CHECK_ABS(f.r2, 0.999993745883712, 1e-12);
  CHECK_REL(f.rss, 26.6173985294224, 1e-9);
}

TEST_CASE("the one least-squares line: weights as repeat counts, weights of 1, both residual forms") {
  using vzero::detail::least_squares_line;
  // Closed form worked here: weight 2 on (1, 3) is the point given twice; over
  // x = {0,1,1,2,3}, y = {1,3,3,2,5}: x̄ = 1.4, ȳ = 2.8, Sxx = 15 − 5·1.96 = 5.2,
  // Sxy = 25 − 5·1.4·2.8 = 5.4, slope = 27/26, intercept = 2.8 − 1.4·27/26 = 35/26.
  const double x[] = {0, 1, 2, 3}, y[] = {1, 3, 2, 5}, w[] = {1, 2, 1, 1};
  const auto wf = least_squares_line(x, y, 4, w);
  CHECK_REL(wf.slope, 27.0 / 26.0, 1e-14);
  CHECK_REL(wf.intercept, 35.0 / 26.0, 1e-14);
  CHECK(std::isnan(wf.slope_se));  // the spread of a weighted line is the caller's
  // Weights of 1 are the unweighted line bit for bit (1·v is v exactly).
  std::vector<double> ones(36, 1.0);
  const auto plain = least_squares_line(norris_x, norris_y, 36);
  const auto unit = least_squares_line(norris_x, norris_y, 36, ones.data());
  CHECK(plain.slope == unit.slope);
  CHECK(plain.intercept == unit.intercept);
  // The two residual forms agree to rounding (NIST StRD Norris RSS, REFERENCES §1).
  const auto stepwise = least_squares_line(norris_x, norris_y, 36, nullptr, vzero::detail::Residual::stepwise);
  CHECK_REL(stepwise.rss, 26.6173985294224, 1e-9);
  CHECK(stepwise.slope == plain.slope);
}

TEST_CASE("quantiles match R qt and the normal quantile") {
  // R 4.2.2 qt(0.975, 10), qt(0.975, 9) (REFERENCES §4a); z = 1.959963984540054 (REFERENCES §3).
  CHECK_REL(vzero::detail::student_t_quantile(0.975, 10), 2.228138851986274, 1e-12);
  CHECK_REL(vzero::detail::student_t_quantile(0.975, 9), 2.262157162798205, 1e-12);
  CHECK_REL(vzero::detail::normal_quantile(0.975), 1.959963984540054, 1e-13);
  // Self-consistency: the upper tail at the quantile gives back the probability.
  CHECK_REL(vzero::detail::student_t_sf(vzero::detail::student_t_quantile(0.99, 4.5), 4.5), 0.01, 1e-10);
  // t(0.975, df) by mpmath 1.3.0 (Debian python3-mpmath, 40 digits: the root of
  // betainc(df/2, 0.5, 0, df/(df + t²), regularized)/2 = 0.025): 2.014103388880846695 at
  // df = 45, 1.959987707534609639 at df = 1e5 (the old own implementation was 1.8e-11 off
  // there), 2.867520707191189404 at df = 3.7. The fit's public quantile is the same code, so
  // the fit's intervals and the rate finder's agree to the bit.
  CHECK_REL(vzero::detail::student_t_quantile(0.975, 45), 2.014103388880846695, 4e-16);
  CHECK_REL(vzero::detail::student_t_quantile(0.975, 1e5), 1.959987707534609639, 4e-16);
  CHECK_REL(vzero::detail::student_t_quantile(0.975, 3.7), 2.867520707191189404, 4e-16);
  CHECK(vzero::student_t_quantile(0.975, 45) == vzero::detail::student_t_quantile(0.975, 45));
  CHECK(vzero::student_t_cdf(-1.5, 7) == vzero::detail::student_t_sf(1.5, 7));
}

TEST_CASE("estimators on the two-spike trace match SciPy 1.10.1 and MASS 7.3-58.2") {
  // Expected values: REFERENCES §3 (scipy.stats.linregress / theilslopes, MASS::rlm).
  SUBCASE("OLS, all points and spikes removed (scipy.stats.linregress)") {
    const auto all = vzero::detail::least_squares_line(robust_t_s, robust_y, 15);
    CHECK_REL(all.slope, 0.002011547619047619, 1e-12);
    CHECK_REL(all.intercept, 0.0854675, 1e-12);
    std::vector<double> t, y;
    for (int i = 0; i < 15; ++i)
      if (i != 3 && i != 12) {
        t.push_back(robust_t_s[i]);
        y.push_back(robust_y[i]);
      }
    const auto clean = vzero::detail::least_squares_line(t.data(), y.data(), 13);
    CHECK_REL(clean.slope, 0.001998555484009444, 1e-12);
    CHECK_REL(clean.intercept, 0.05027308435286543, 1e-12);
  }
  SUBCASE("Theil–Sen slope, intercepts and Sen 1968 interval (scipy.stats.theilslopes)") {
    double separate = NAN;
    const auto ts = vzero::detail::theil_sen(robust_t_s, robust_y, 15, &separate);
    CHECK_REL(ts.slope, 0.0019985185185185184, 1e-12);
    CHECK_REL(ts.intercept, 0.05054444444444445, 1e-12);  // method='joint'
    CHECK_REL(separate, 0.07955555555555555, 1e-12);      // SciPy 1.10 default 'separate'
    CHECK_REL(ts.ci_low, 0.0019866666666666665, 1e-12);
    CHECK_REL(ts.ci_high, 0.0020093333333333335, 1e-12);
  }
  SUBCASE("Huber M, converged (MASS::rlm(y ~ t, acc = 1e-12, maxit = 500))") {
    const auto h = vzero::detail::huber(robust_t_s, robust_y, 15);
    CHECK_REL(h.slope, 0.0019990520720520656, 1e-9);
    CHECK_REL(h.intercept, 0.05045880828080581, 1e-9);
    CHECK(h.slope_se > 0);
  }
  SUBCASE("every robust estimator stays near the underlying line (REFERENCES §3 property)") {
    for (auto e : {vzero::Estimator::theil_sen, vzero::Estimator::huber}) {
      const auto f = e == vzero::Estimator::huber ? vzero::detail::huber(robust_t_s, robust_y, 15)
                                                  : vzero::detail::theil_sen(robust_t_s, robust_y, 15);
      CHECK(std::fabs(f.slope - 0.002) < 5e-6);
      CHECK(std::fabs(f.intercept - 0.05) < 1e-3);
    }
  }
}

TEST_CASE("the outlier rule removes exactly the two spikes") {
  const Trace tr = robust_trace();
  vzero::RateOptions opt;
  opt.window = vzero::WindowMethod::leading;
  opt.min_points = 15;
  opt.estimator = vzero::Estimator::ols;
  opt.tangent = vzero::TangentMode::never;
  const auto r = vzero::find_rate(tr.view(), opt);
  CHECK(r.n_points == 15);
  CHECK(r.n_outliers == 2);
  CHECK(r.used[3] == 0);
  CHECK(r.used[12] == 0);
  CHECK(has_flag(r, "outliers"));
  // OLS on the 13 remaining reads: scipy.stats.linregress value (REFERENCES §3).
  CHECK_REL(r.slope, 0.001998555484009444, 1e-12);
  CHECK_REL(r.intercept, 0.05027308435286543, 1e-12);

  SUBCASE("the automatic window with Theil–Sen keeps the line (REFERENCES §3 property)") {
    const auto a = vzero::find_rate(tr.view(), vzero::RateOptions{});
    CHECK(a.n_outliers == 2);
    CHECK(a.t_start_s == 0.0);
    CHECK(a.t_end_s == 210.0);
    CHECK(std::fabs(a.slope - 0.002) < 5e-6);
    CHECK(a.estimator == vzero::Estimator::theil_sen);
  }
}

TEST_CASE("two adjacent spikes are both rejected") {
  // Regression: two neighbouring bubble reads once hid each other from the spike screen.
  Trace tr = noisy_line(30, 10, 0.1, 0.001, 1e-4, 12);
  tr.y[3] += 0.12;
  tr.y[4] += 0.25;
  const auto r = vzero::find_rate(tr.view(NAN, NAN, 1e-4), vzero::RateOptions{});
  CHECK(r.n_outliers == 2);
  CHECK(r.used[3] == 0);
  CHECK(r.used[4] == 0);
  CHECK(r.t_start_s == 0.0);
  CHECK(r.t_end_s == 290.0);
  CHECK(r.lag_s == 0.0);
  CHECK(std::fabs(r.slope / 0.001 - 1) < 0.01);
  CHECK(r.flags == std::vector<std::string>{"outliers"});
}

TEST_CASE("the simulator's closed form reproduces the integrated Michaelis–Menten table") {
  // REFERENCES §5 (Schnell & Mendoza 1997 via scipy.special.lambertw), abs 1e-10 µM.
  for (int i = 0; i <= 20; ++i) CHECK_ABS(vzero::sim::mm_product(0.5 * i, 100, 50, 10), mm_progress_P_uM[i], 1e-10);
  CHECK_REL(vzero::sim::mm_v0(100, 50, 10), 6.666666666666667, 1e-14);
  // Overflow case: S0 = 1000, Km = 1, Vmax = 100, t = 2 → S = 800.2228650088497 (W of exp(806.9)).
  CHECK_REL(1000 - vzero::sim::mm_product(2, 1000, 1, 100), 800.2228650088497, 1e-12);
}

TEST_CASE("a 10 % conversion limit picks exactly the first four reads of the progress curve") {
  // REFERENCES §5: P reaches 10 µM (10 % of S0) at t = 1.5268 min, so the reads at 0, 0.5, 1
  // and 1.5 min qualify; their OLS slope is 6.55184564678307 µM/min.
  Trace tr;
  for (int i = 0; i <= 20; ++i) tr.t.push_back(30.0 * i);  // seconds
  tr.y.assign(std::begin(mm_progress_P_uM), std::end(mm_progress_P_uM));
  tr.st.assign(tr.t.size(), ReadStatus::ok);
  vzero::RateOptions opt;
  opt.min_points = 3;
  opt.estimator = vzero::Estimator::ols;
  opt.tangent = vzero::TangentMode::never;
  const auto r = vzero::find_rate(tr.view(100.0, 1.0), opt);
  CHECK(r.n_points == 4);
  CHECK(r.t_start_s == 0.0);
  CHECK(r.t_end_s == 90.0);
  CHECK(r.window_end == "conversion");
  CHECK_REL(r.slope * 60, 6.55184564678307, 1e-12);
  CHECK(r.conversion < 0.10);
  CHECK(r.flags.empty());

  SUBCASE("the initial tangent comes closer to v0 = 6.6667 µM/min than the line") {
    opt.tangent = vzero::TangentMode::automatic;
    const auto c = vzero::find_rate(tr.view(100.0, 1.0), opt);
    CHECK(c.tangent == "parabola");
    CHECK_REL(c.line_slope * 60, 6.55184564678307, 1e-12);
    CHECK(std::fabs(c.slope * 60 - 6.666666666666667) < std::fabs(c.line_slope * 60 - 6.666666666666667));
    // v0 now rests on the parabola's reads (4 × the 4-read window).
    CHECK(c.tangent_end_s == 450.0);
    CHECK(std::count(c.used.begin(), c.used.end(), 1) == 16);
  }
  SUBCASE("a limit passed inside the shortest window is flagged") {
    opt.min_points = 6;
    const auto d = vzero::find_rate(tr.view(100.0, 1.0), opt);
    CHECK(has_flag(d, "depleted"));
    CHECK(d.n_points == 6);
  }
}

TEST_CASE("window methods") {
  Trace tr = noisy_line(30, 10, 0.1, 0.001, 1e-4, 11);
  tr.st[2] = ReadStatus::missing;
  tr.y[2] = NAN;
  vzero::RateOptions opt;
  opt.min_points = 5;
  opt.skip_s = 5;
  SUBCASE("leading: the first min_points ok reads after the dead time") {
    opt.window = vzero::WindowMethod::leading;
    const auto r = vzero::find_rate(tr.view(), opt);
    CHECK(r.t_start_s == 10.0);  // read 0 is before skip_s
    CHECK(r.t_end_s == 60.0);    // reads 1, 3, 4, 5, 6 (read 2 is missing)
    CHECK(r.n_points == 5);
    CHECK(r.window_end == "fixed");
    CHECK(r.used[0] == 0);
    CHECK(r.used[2] == 0);
  }
  SUBCASE("steepest: the min_points consecutive reads with the largest slope") {
    // Slow start, a steep stretch at reads 10–14, then slower again.
    Trace s;
    double y = 0;
    for (int i = 0; i < 25; ++i) {
      s.t.push_back(10.0 * i);
      s.y.push_back(y);
      y += (i >= 10 && i < 14) ? 0.05 : 0.01;
    }
    s.st.assign(s.t.size(), ReadStatus::ok);
    opt.window = vzero::WindowMethod::steepest;
    opt.skip_s = 0;
    const auto r = vzero::find_rate(s.view(), opt);
    CHECK(r.t_start_s == 100.0);
    CHECK(r.t_end_s == 140.0);
    CHECK_REL(r.slope, 0.005, 1e-12);
  }
}

TEST_CASE("flags") {
  vzero::RateOptions opt;
  SUBCASE("overflow reads end the window and are flagged") {
    Trace tr = noisy_line(20, 10, 0.1, 0.001, 1e-4, 3);
    for (int i = 12; i < 20; ++i) {
      tr.st[static_cast<std::size_t>(i)] = ReadStatus::overflow;
      tr.y[static_cast<std::size_t>(i)] = NAN;
    }
    const auto r = vzero::find_rate(tr.view(), opt);
    CHECK(has_flag(r, "overflow"));
    CHECK(r.window_end == "overflow");
    CHECK(r.t_end_s <= 110.0);
  }
  SUBCASE("reads at the signal ceiling end the window") {
    Trace tr = noisy_line(20, 10, 0.1, 0.001, 1e-4, 4);
    opt.signal_ceiling = 0.2;  // crossed at t ≈ 100 s
    const auto r = vzero::find_rate(tr.view(), opt);
    CHECK(has_flag(r, "ceiling"));
    CHECK(r.window_end == "ceiling");
    CHECK(r.t_end_s <= 100.0);
  }
  SUBCASE("a lag is detected and skipped") {
    // Coupled-assay lag of 60 s on a linear rate (invented, known truth 0.001 per s).
    Trace tr;
    vzero::sim::Rng rng(5);
    for (int i = 0; i < 40; ++i) {
      const double t = 10.0 * i;
      tr.t.push_back(t);
      tr.y.push_back(0.001 * (t - 60 * (1 - std::exp(-t / 60))) + 2e-4 * rng.normal());
    }
    tr.st.assign(tr.t.size(), ReadStatus::ok);
    const auto r = vzero::find_rate(tr.view(NAN, NAN, 2e-4), opt);
    CHECK(has_flag(r, "lag"));
    CHECK(r.t_start_s > 0);
    CHECK(r.lag_s == r.t_start_s);
    CHECK(std::fabs(r.line_slope / 0.001 - 1) < 0.05);
  }
  SUBCASE("too few reads") {
    Trace tr = noisy_line(3, 10, 0.1, 0.001, 1e-4, 6);
    const auto r = vzero::find_rate(tr.view(), opt);
    CHECK(has_flag(r, "too-few-reads"));
    CHECK(r.n_points == 3);
    CHECK(std::isfinite(r.slope));
    Trace none;
    const auto z = vzero::find_rate(none.view(), opt);
    CHECK(has_flag(z, "too-few-reads"));
    CHECK(std::isnan(z.slope));
    CHECK(z.used.empty());
  }
  SUBCASE("a negative rate") {
    Trace tr = noisy_line(20, 10, 0.5, -0.001, 1e-4, 7);
    const auto r = vzero::find_rate(tr.view(), opt);
    CHECK(has_flag(r, "negative"));
    CHECK(!has_flag(r, "noise"));
  }
  SUBCASE("a flat trace is noise, by the interval and by the blank's limit of detection") {
    Trace tr = noisy_line(30, 10, 0.1, 0.0, 1e-3, 8);
    const auto r = vzero::find_rate(tr.view(NAN, NAN, 1e-3), opt);
    CHECK(has_flag(r, "noise"));
    // A clear slope of 0.001 per s is not noise.
    Trace up = noisy_line(30, 10, 0.1, 0.001, 1e-3, 8);
    CHECK(!has_flag(vzero::find_rate(up.view(NAN, NAN, 1e-3), opt), "noise"));
  }
  SUBCASE("a trace curved from the start has no linear window") {
    Trace tr;
    for (int i = 0; i < 30; ++i) {
      tr.t.push_back(10.0 * i);
      tr.y.push_back(1 - std::exp(-10.0 * i / 30));
    }
    tr.st.assign(tr.t.size(), ReadStatus::ok);
    const auto r = vzero::find_rate(tr.view(), opt);
    CHECK(has_flag(r, "nonlinear"));
    CHECK(r.n_points == opt.min_points);
    CHECK(r.window_end == "curvature");
  }
  SUBCASE("a clean line has no flags") {
    Trace tr = noisy_line(30, 10, 0.1, 0.001, 1e-4, 9);
    const auto r = vzero::find_rate(tr.view(NAN, NAN, 1e-4), opt);
    CHECK(r.flags.empty());
    CHECK(r.n_points == 30);
    CHECK(r.window_end == "reads");
    CHECK(r.ci_low < 0.001);
    CHECK(r.ci_high > 0.001);
  }
}

TEST_CASE("rate options built in code are checked by the option table's rules, with full messages") {
  auto check = [](const vzero::RateOptions& r) {
    vzero::AnalysisOptions a;
    a.rates = r;
    return vzero::check_analysis_options(a);
  };
  vzero::RateOptions opt;
  CHECK(check(opt).empty());
  opt.min_points = 1;
  CHECK(check(opt) == "min-points is 1; expected a whole number of at least 3");
  opt = {};
  opt.linearity_alpha = 0.7;
  CHECK(check(opt) == "curvature-alpha is 0.7; expected a number of at least 0 and below 0.5");
  opt = {};
  opt.tangent_reach = 0.5;
  CHECK(check(opt) == "tangent-span is 0.5; expected a number of at least 1");
  opt = {};
  opt.max_conversion = 0;  // a fraction in the struct, percent in the option
  CHECK(check(opt) == "max-conversion is 0; expected a number above 0 and at most 100");
  opt = {};
  opt.signal_ceiling = INFINITY;
  CHECK(check(opt) == "signal-ceiling is inf; expected a number");
}

TEST_CASE("prefix-sum window statistics agree with the two-pass fits") {
  // The search statistics against the direct estimators on the same reads.
  Trace tr = noisy_line(60, 15, 0.3, 0.002, 1e-3, 21);
  for (std::size_t i = 0; i < tr.y.size(); ++i) tr.y[i] -= 1e-6 * tr.t[i] * tr.t[i];
  const vzero::detail::WindowStats ws(tr.t.data(), tr.y.data(), 60);
  for (int a : {0, 7, 30}) {
    for (int b : {a + 5, a + 12, 60}) {
      const auto w = ws.test(a, b, NAN, 0.0);
      const auto line = vzero::detail::least_squares_line(tr.t.data() + a, tr.y.data() + a, b - a);
      const auto q = vzero::detail::quadratic(tr.t.data() + a, tr.y.data() + a, b - a, 0.0);
      CHECK_REL(w.slope, line.slope, 1e-9);
      CHECK_REL(w.rss_line, line.rss, 1e-6);
      CHECK_REL(w.curvature, q.c2, 1e-7);
      CHECK_REL(w.curvature_se, q.c2_se, 1e-6);
    }
  }
}

TEST_CASE("the cubic's slope at a point, and its variance factor") {
  // Through y = 2 + 3x − 0.5x² + 0.1x³ exactly (x = 0, 1, …, 6): the slope at x = 2 is
  // 3 − 2·0.5·2 + 3·0.1·4 = 2.2 and the residuals vanish. Var(slope) = σ²·dᵀ(XᵀX)⁻¹d with
  // d = (0, 1, 2x, 3x²), worked here from the raw design X = (1, x, x², x³) by Eigen's
  // inverse — not from the centred, scaled design the function uses.
  std::vector<double> x, y;
  for (int i = 0; i <= 6; ++i) {
    x.push_back(i);
    y.push_back(2 + 3.0 * i - 0.5 * i * i + 0.1 * i * i * i);
  }
  const auto c = vzero::detail::cubic_slope(x.data(), y.data(), 7, 2.0);
  CHECK(c.slope == doctest::Approx(2.2).epsilon(1e-12));
  CHECK(c.resid_sd < 1e-12);
  Eigen::Matrix4d xtx = Eigen::Matrix4d::Zero();
  for (double v : x) {
    const Eigen::Vector4d b(1, v, v * v, v * v * v);
    xtx += b * b.transpose();
  }
  const Eigen::Vector4d d(0, 1, 4, 12);
  CHECK(c.var_factor == doctest::Approx(d.dot(xtx.inverse() * d)).epsilon(1e-9));
  // Four points cannot leave a residual: no answer.
  CHECK(std::isnan(vzero::detail::cubic_slope(x.data(), y.data(), 4, 2.0).slope));
}

TEST_CASE("same input, same bits: repeated and concurrent calls agree") {
  const vzero::sim::Plate p = vzero::sim::simulate_plate(vzero::sim::PlateSpec{}, 7);
  const vzero::sim::Plate p2 = vzero::sim::simulate_plate(vzero::sim::PlateSpec{}, 7);
  REQUIRE(p.signal.size() == p2.signal.size());
  for (std::size_t w = 0; w < p.signal.size(); ++w)
    CHECK(std::memcmp(p.signal[w].data(), p2.signal[w].data(), p.signal[w].size() * sizeof(double)) == 0);
  const int reads = static_cast<int>(p.time_s.size());
  const auto run_all = [&](std::vector<double>& out) {
    for (std::size_t w = 0; w < p.signal.size(); ++w) {
      vzero::TraceView v{p.time_s.data(), p.signal[w].data(), nullptr, p.status[w].data(), reads};
      v.substrate = p.truth[w].s0_uM;
      v.conc_per_signal = 1 / p.signal_per_uM;
      const auto r = vzero::find_rate(v, vzero::RateOptions{});
      out.insert(out.end(), {r.slope, r.slope_se, r.ci_low, r.ci_high, r.t_start_s, r.t_end_s, r.tangent_slope});
    }
  };
  std::vector<double> a, b, c;
  run_all(a);
  std::thread th([&] { run_all(b); });
  run_all(c);
  th.join();
  REQUIRE(a.size() == b.size());
  CHECK(std::memcmp(a.data(), b.data(), a.size() * sizeof(double)) == 0);
  CHECK(std::memcmp(a.data(), c.data(), a.size() * sizeof(double)) == 0);
}
