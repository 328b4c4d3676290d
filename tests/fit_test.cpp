// Tests of the kinetics fit (include/vzero/fit.hpp) and of `vzero fit`.
// Reference values: shared REFERENCES.md §4 (Puromycin, Misra1d) unless said otherwise.
#include "vzero/fit.hpp"

#include <sys/wait.h>
#include <unistd.h>
#include <array>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <sstream>

#include "kinetic_check.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/table.hpp"

namespace {

// A built-in model by its CLI word.
const vzero::KineticModel& builtin(std::string_view name) { return vzero::kinetic_model(name); }

// R datasets::Puromycin (Treloar 1974, as given by Bates & Watts 1988, Nonlinear
// Regression Analysis and Its Applications, Appendix A1.3). conc ppm, rate counts/min/min.
const std::vector<double> puro_treated_S = {0.02, 0.02, 0.06, 0.06, 0.11, 0.11, 0.22, 0.22, 0.56, 0.56, 1.10, 1.10};
const std::vector<double> puro_treated_v = {76, 47, 97, 107, 123, 139, 159, 152, 191, 201, 207, 200};
const std::vector<double> puro_untreated_S = {0.02, 0.02, 0.06, 0.06, 0.11, 0.11, 0.22, 0.22, 0.56, 0.56, 1.10};
const std::vector<double> puro_untreated_v = {67, 51, 84, 86, 98, 115, 131, 124, 144, 158, 160};

// NIST StRD nonlinear regression Misra1d (as shipped in Eigen 3.4.0's
// unsupported/test/levenberg_marquardt.cpp): y = b1*b2*x/(1 + b2*x) = Vmax*S/(Km + S).
const std::vector<double> misra1d_x = {77.6,  114.9, 141.1, 190.8, 239.9, 289.0, 332.8,
                                       378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0};
const std::vector<double> misra1d_y = {10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02,
                                       44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78};

std::string read_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

}  // namespace

TEST_CASE("t quantile matches R qt and the closed forms for df 1 and 2") {
  // R 4.2.2 qt(0.975, 10) and qt(0.975, 9), from REFERENCES.md §4a.
  CHECK_REL(vzero::student_t_quantile(0.975, 10), 2.228138851986274, 1e-12);
  CHECK_REL(vzero::student_t_quantile(0.975, 9), 2.262157162798205, 1e-12);
  // Closed forms (textbook): df 1 is Cauchy, t = tan(pi (p - 1/2)); df 2: t = (2p - 1)/sqrt(2p(1 - p)).
  CHECK_REL(vzero::student_t_quantile(0.975, 1), std::tan(M_PI * 0.475), 1e-12);
  CHECK_REL(vzero::student_t_quantile(0.975, 2), 0.95 / std::sqrt(2 * 0.975 * 0.025), 1e-12);
  CHECK_REL(vzero::student_t_quantile(0.025, 10), -2.228138851986274, 1e-12);
  CHECK_REL(vzero::student_t_cdf(2.228138851986274, 10), 0.975, 1e-13);
  // Large df tends to the normal quantile 1.959963984540054 (REFERENCES.md §3, z).
  CHECK_REL(vzero::student_t_quantile(0.975, 1e7), 1.959963984540054, 1e-6);
}

TEST_CASE("Puromycin treated: nls estimates, SEs, intervals (R datasets::Puromycin, REFERENCES.md §4a)") {
  const auto r = vzero::fit_model(puro_treated_S, puro_treated_v, {}, builtin("mm"));
  REQUIRE(r.ok);
  CHECK(r.converged);
  CHECK(r.start_method == "Hanes-Woolf");
  const auto& vmax = r.parameters[0];
  const auto& km = r.parameters[1];
  CHECK(vmax.name == "Vmax");
  CHECK(km.name == "Km");
  CHECK_REL(vmax.estimate, 212.683743142536, 1e-6);
  CHECK_REL(km.estimate, 0.0641212816815671, 1e-6);
  CHECK_REL(vmax.se, 6.94715516, 1e-5);
  CHECK_REL(km.se, 0.00828094950, 1e-5);
  CHECK(r.df == 10);
  CHECK_REL(r.residual_sd, 10.933658191288764, 1e-7);
  CHECK_REL(r.rss, 1195.4488144393588, 1e-9);
  CHECK_REL(r.correlation(0, 1), 0.76508370, 1e-5);
  CHECK_REL(r.t_quantile, 2.228138851986274, 1e-12);
  CHECK_REL(vmax.ci_low, 197.2044, 1e-5);
  CHECK_REL(vmax.ci_high, 228.1628, 1e-5);
  CHECK_REL(km.ci_low, 0.04566998, 1e-5);
  CHECK_REL(km.ci_high, 0.08257207, 1e-5);
  // R/MASS confint (profile t); R interpolates its profile, so 1e-3.
  CHECK_REL(vmax.profile_low, 197.3021, 1e-3);
  CHECK_REL(vmax.profile_high, 229.2901, 1e-3);
  CHECK_REL(km.profile_low, 0.04692517, 1e-3);
  CHECK_REL(km.profile_high, 0.08615995, 1e-3);
  // AIC in the Gaussian log-likelihood form of R's AIC() for nls (stats:::logLik.nls, from
  // memory), evaluated at the reference RSS: n(ln 2pi + 1 - ln n + ln RSS) + 2(p + 1).
  const double n = 12;
  CHECK_REL(r.aic, n * (std::log(2 * M_PI) + 1 - std::log(n) + std::log(1195.4488144393588)) + 6, 1e-12);
  // Starting values are the Hanes-Woolf (S/v on S) OLS line, REFERENCES.md §4a.
  CHECK_REL(r.start[0], 216.2168988, 1e-8);
  CHECK_REL(r.start[1], 0.06791486632, 1e-8);
}

TEST_CASE("Puromycin untreated: nls estimates, SEs, intervals (R datasets::Puromycin, REFERENCES.md §4a)") {
  const auto r = vzero::fit_model(puro_untreated_S, puro_untreated_v, {}, builtin("mm"));
  REQUIRE(r.ok);
  const auto& vmax = r.parameters[0];
  const auto& km = r.parameters[1];
  CHECK_REL(vmax.estimate, 160.280046182714, 1e-6);
  CHECK_REL(km.estimate, 0.0477081845059544, 1e-6);
  CHECK_REL(vmax.se, 6.48024550, 1e-5);
  CHECK_REL(km.se, 0.00778187524, 1e-5);
  CHECK(r.df == 9);
  CHECK_REL(r.residual_sd, 9.773003028634964, 1e-7);
  CHECK_REL(r.rss, 859.6042937793736, 1e-9);
  CHECK_REL(r.correlation(0, 1), 0.77682708, 1e-5);
  CHECK_REL(r.t_quantile, 2.262157162798205, 1e-12);
  CHECK_REL(vmax.ci_low, 145.6207, 1e-5);
  CHECK_REL(vmax.ci_high, 174.9394, 1e-5);
  CHECK_REL(km.ci_low, 0.03010439, 1e-5);
  CHECK_REL(km.ci_high, 0.06531206, 1e-5);
  CHECK_REL(vmax.profile_low, 145.6370, 1e-3);
  CHECK_REL(vmax.profile_high, 176.5444, 1e-3);
  CHECK_REL(km.profile_low, 0.03137460, 1e-3);
  CHECK_REL(km.profile_high, 0.07006131, 1e-3);
  CHECK_REL(r.start[0], 166.8786682, 1e-8);  // Hanes-Woolf, REFERENCES.md §4a
  CHECK_REL(r.start[1], 0.05653458932, 1e-8);
}

TEST_CASE("Puromycin from the R help-page start (Vmax 200, Km 0.05) reaches the same optimum") {
  vzero::FitOptions o;
  o.start = {200, 0.05};  // R ?Puromycin example
  const auto r = vzero::fit_model(puro_treated_S, puro_treated_v, {}, builtin("mm"), o);
  REQUIRE(r.ok);
  CHECK(r.start_method == "given");
  CHECK_REL(r.parameters[0].estimate, 212.683743142536, 1e-6);
  CHECK_REL(r.parameters[1].estimate, 0.0641212816815671, 1e-6);
}

TEST_CASE("the reported estimate is not the Lineweaver-Burk one (REFERENCES.md §4a)") {
  // Unweighted OLS of 1/v on 1/S (the double-reciprocal line), computed here.
  double sx = 0, sy = 0, sxx = 0, sxy = 0;
  const double n = static_cast<double>(puro_treated_S.size());
  for (std::size_t k = 0; k < puro_treated_S.size(); ++k) {
    const double x = 1 / puro_treated_S[k], y = 1 / puro_treated_v[k];
    sx += x, sy += y;
  }
  for (std::size_t k = 0; k < puro_treated_S.size(); ++k) {
    const double x = 1 / puro_treated_S[k] - sx / n, y = 1 / puro_treated_v[k] - sy / n;
    sxx += x * x, sxy += x * y;
  }
  const double slope = sxy / sxx, intercept = sy / n - slope * sx / n;
  CHECK_REL(intercept, 5.107181641585808e-3, 1e-10);
  CHECK_REL(slope, 2.47220961099642e-4, 1e-10);
  const double lb_vmax = 1 / intercept, lb_km = slope / intercept;
  CHECK_REL(lb_vmax, 195.80270884775004, 1e-10);
  CHECK_REL(lb_km, 0.048406533867254145, 1e-10);

  const auto r = vzero::fit_model(puro_treated_S, puro_treated_v, {}, builtin("mm"));
  REQUIRE(r.ok);
  CHECK(r.parameters[0].estimate > lb_vmax * 1.07);  // LB is 7.9 % low on Vmax
  CHECK(r.parameters[1].estimate > lb_km * 1.25);    // and 24.5 % low on Km
  CHECK(lb_vmax < r.parameters[0].profile_low);      // LB Vmax lies outside the profile interval
  double lb_rss = 0;
  for (std::size_t k = 0; k < puro_treated_S.size(); ++k) {
    const double f = lb_vmax * puro_treated_S[k] / (lb_km + puro_treated_S[k]);
    lb_rss += (puro_treated_v[k] - f) * (puro_treated_v[k] - f);
  }
  CHECK_REL(lb_rss, 1920.64, 1e-5);
  CHECK(r.rss < lb_rss);
}

TEST_CASE("NIST StRD Misra1d from both certified start vectors (REFERENCES.md §4b)") {
  // NIST start 1: b1 = 500, b2 = 1e-4; start 2: b1 = 450, b2 = 3e-4 (Km = 1/b2).
  for (const std::array<double, 2> start : {std::array<double, 2>{500, 1e4}, std::array<double, 2>{450, 1 / 3e-4}}) {
    CAPTURE(start[0]);
    vzero::FitOptions o;
    o.start = {start[0], start[1]};
    const auto r = vzero::fit_model(misra1d_x, misra1d_y, {}, builtin("mm"), o);
    REQUIRE(r.ok);
    CHECK(r.converged);
    const auto& vmax = r.parameters[0];
    const auto& km = r.parameters[1];
    CHECK_REL(vmax.estimate, 437.36970754, 1e-7);       // NIST certified b1
    CHECK_REL(1 / km.estimate, 3.0227324449e-4, 1e-7);  // NIST certified b2
    CHECK_REL(km.estimate, 3308.265015936872, 1e-7);    // 1/b2
    CHECK_REL(r.rss, 5.6419295283e-2, 1e-9);            // NIST certified RSS
    CHECK_REL(r.residual_sd, 6.85682721e-2, 1e-8);      // R nlsLM, SciPy
    CHECK_REL(vmax.se, 3.6489175, 1e-6);                // R nlsLM, SciPy
    CHECK_REL(km.se, 32.1053, 1e-4);                    // R nls on the MM form
    // SE(b2) on the (b1, b2) scale is SE(Km)/Km² (the tangent-plane covariance transforms exactly).
    CHECK_REL(km.se / (km.estimate * km.estimate), 2.9334355e-6, 1e-6);
  }
}

namespace {
struct Truth {
  const vzero::KineticModel& model;
  std::vector<double> p;
  std::map<std::string, double> fixed = {};  // known quantities (morrison's E)
};

void make_data(const Truth& t, std::vector<double>& s, std::vector<double>& i, std::vector<double>& v) {
  const std::vector<double> s_levels = {2.5, 5, 10, 20, 40, 80, 160, 320, 640, 1280};
  const std::vector<double> i_levels =
      t.model.needs_inhibitor() ? std::vector<double>{0, 10, 30, 90} : std::vector<double>{0};
  for (double il : i_levels) {
    for (double sl : s_levels) {
      s.push_back(sl);
      i.push_back(il);
      v.push_back(t.model.rate(t.p, sl, il, {}));
    }
  }
}
}  // namespace

TEST_CASE("exact recovery on noiseless simulated data, every model (simulation with known truth)") {
  const std::vector<Truth> truths = {
      {builtin("mm"), {12, 50}},
      {builtin("substrate-inhibition"), {10, 40, 300}},
      {builtin("hill"), {5, 30, 2.2}},
      {builtin("competitive"), {12, 50, 25}},
      {builtin("uncompetitive"), {12, 50, 60}},
      {builtin("mixed"), {12, 50, 25, 60}},
      {builtin("4pl"), {5, 95, 60, 1.3}},  // more in dose_response_test.cpp
      {builtin("morrison"), {50, 30, 20}, {{"E", 20}}},
  };
  // Every built-in model has a truth here (a new one must add its own).
  CHECK(truths.size() == vzero::kinetic_models().size());
  for (const auto& t : truths) {
    CAPTURE(t.model.name);
    std::vector<double> s, i, v;
    make_data(t, s, i, v);
    vzero::FitOptions o;
    o.fixed = t.fixed;
    const auto r = t.model.needs_inhibitor() ? vzero::fit_inhibition(s, i, v, {}, t.model, o)
                                             : vzero::fit_model(s, v, {}, t.model, o);
    INFO(r.message);
    REQUIRE(r.ok);
    CHECK(r.converged);
    REQUIRE(r.parameters.size() == t.p.size());
    for (std::size_t k = 0; k < t.p.size(); ++k) {
      CAPTURE(r.parameters[k].name);
      CHECK_REL(r.parameters[k].estimate, t.p[k], 1e-8);
    }
    CHECK(r.rss < 1e-18);
  }
}

TEST_CASE("analytic gradients match central finite differences, every registered model") {
  REQUIRE(vzero::kinetic_models().size() >= 6);
  for (const vzero::KineticModel* m : vzero::kinetic_models())
    vzero::test::check_gradient(*m, vzero::test::probe_parameters(*m));
  // And at the simulation truths above (Hill n = 2.2, substrate-inhibition Km 40).
  vzero::test::check_gradient(builtin("hill"), {5, 30, 2.2});
  vzero::test::check_gradient(builtin("substrate-inhibition"), {10, 40, 300});
}

TEST_CASE("fits the data cannot support give a message, not a number") {
  using vzero::fit_model;
  auto msg = [](const vzero::FitResult& r) {
    CHECK_FALSE(r.ok);
    CHECK(r.parameters.empty());
    return r.message;
  };
  CHECK(msg(fit_model({0.1, 0.2}, {5, 8}, {}, builtin("mm"))) ==
        "too few points: 2 for 2 parameters (Vmax, Km); at least 3 are needed");
  CHECK(msg(fit_model({0.5, 0.5, 0.5, 0.5}, {5, 6, 5.5, 5.2}, {}, builtin("mm"))) ==
        "all 4 points have the same substrate concentration (0.5); a saturation curve needs at least 2 different "
        "concentrations");
  CHECK(msg(fit_model({1, 1, 2, 2, 0}, {5, 6, 5.5, 5.2, 0}, {}, builtin("hill"))) ==
        "only 2 different positive substrate concentrations for the hill model; at least 3 are needed");
  CHECK(msg(fit_model({1, 2, 4, 8}, {-1, -2, -0.5, -3}, {}, builtin("mm"))) ==
        "no positive rate: all 4 rates are <= 0 (the largest is -0.5); check the reaction direction and the blank "
        "subtraction");
  // Rates exactly proportional to S: no saturation, so Km and Vmax are not determined.
  CHECK(msg(fit_model({1, 2, 4, 8, 16}, {2, 4, 8, 16, 32}, {}, builtin("mm"))) ==
        "no curvature: the rates rise in proportion to substrate up to the highest concentration (16), so Km and Vmax "
        "run off to infinity together and only Vmax/Km = 2 is determined; measure at concentrations above Km");
  // Puromycin shows no substrate inhibition.
  CHECK(msg(fit_model(puro_treated_S, puro_treated_v, {}, builtin("substrate-inhibition"))) ==
        "no substrate inhibition: Ki runs off to infinity (the rates do not fall at high substrate); fit the mm model "
        "instead");
  CHECK(msg(vzero::fit_inhibition({1, 2, 4, 8}, {5, 5, 5, 5}, {1, 2, 3, 3.5}, {}, builtin("competitive"))) ==
        "all 4 points have the same inhibitor concentration (5); the competitive model needs at least 2 inhibitor "
        "levels");
  // An inhibitor that changes nothing: Kic runs off.
  {
    std::vector<double> s, i, v;
    make_data({builtin("mm"), {12, 50}}, s, i, v);
    std::vector<double> s2 = s, i2(s.size(), 40.0), v2 = v;
    s.insert(s.end(), s2.begin(), s2.end());
    i.insert(i.end(), i2.begin(), i2.end());
    v.insert(v.end(), v2.begin(), v2.end());
    CHECK(msg(vzero::fit_inhibition(s, i, v, {}, builtin("competitive"))) ==
          "no competitive inhibition: Kic runs off to infinity (the inhibitor does not raise the apparent Km)");
  }
  CHECK_THROWS_WITH_AS(fit_model({1, 2}, {1}, {}, builtin("mm")),
                       "fit_model: s, inhibitor, v and weights must have the same length (s 2, v 1, weights 0)",
                       vzero::UsageError);
  CHECK_THROWS_WITH_AS(fit_model({1, 2, 3}, {1, 2, 3}, {}, builtin("mixed")),
                       "fit_model: the mixed model needs inhibitor concentrations; call fit_inhibition",
                       vzero::UsageError);
}

TEST_CASE("weights: a common factor changes nothing; weight 2 equals a duplicated point") {
  const auto plain = vzero::fit_model(puro_treated_S, puro_treated_v, {}, builtin("mm"));
  const auto scaled = vzero::fit_model(puro_treated_S, puro_treated_v, std::vector<double>(12, 4.0), builtin("mm"));
  REQUIRE(plain.ok);
  REQUIRE(scaled.ok);
  for (std::size_t k = 0; k < 2; ++k) {
    CHECK_REL(scaled.parameters[k].estimate, plain.parameters[k].estimate, 1e-9);
    CHECK_REL(scaled.parameters[k].se, plain.parameters[k].se, 1e-7);
  }
  CHECK_REL(scaled.aic, plain.aic, 1e-12);  // the -sum(ln w) term cancels the scale
  std::vector<double> w(12, 1.0);
  w[4] = 2.0;
  auto s = puro_treated_S, v = puro_treated_v;
  s.push_back(s[4]);
  v.push_back(v[4]);
  const auto weighted = vzero::fit_model(puro_treated_S, puro_treated_v, w, builtin("mm"));
  const auto duplicated = vzero::fit_model(s, v, {}, builtin("mm"));
  REQUIRE(weighted.ok);
  REQUIRE(duplicated.ok);
  CHECK_REL(weighted.parameters[0].estimate, duplicated.parameters[0].estimate, 1e-9);
  CHECK_REL(weighted.parameters[1].estimate, duplicated.parameters[1].estimate, 1e-9);
  CHECK_REL(weighted.rss, duplicated.rss, 1e-9);
}

TEST_CASE("kcat and kcat/Km: Vmax/[E] and the delta method") {
  const auto r = vzero::fit_model(puro_treated_S, puro_treated_v, {}, builtin("mm"));
  REQUIRE(r.ok);
  const auto d = vzero::turnover(r, 2.0, puro_treated_S, {}, puro_treated_v, {});
  REQUIRE(d.size() == 2);
  const double v = r.parameters[0].estimate, k = r.parameters[1].estimate;
  CHECK(d[0].name == "kcat");
  CHECK_REL(d[0].estimate, v / 2, 1e-15);
  CHECK_REL(d[0].se, r.parameters[0].se / 2, 1e-15);
  CHECK_REL(d[0].profile_high, r.parameters[0].profile_high / 2, 1e-15);
  CHECK(d[1].name == "kcat/Km");
  CHECK_REL(d[1].estimate, v / (2 * k), 1e-15);
  // var(V/K) ≈ (V/K)² (var V/V² + var K/K² − 2 cov/(V K)) (first-order propagation, common practice).
  const double cv2 = r.covariance(0, 0) / (v * v) + r.covariance(1, 1) / (k * k) - 2 * r.covariance(0, 1) / (v * k);
  CHECK_REL(d[1].se, v / (2 * k) * std::sqrt(cv2), 1e-12);
}

TEST_CASE("diagnostics: linearised coordinates with the line implied by the nonlinear estimate") {
  const auto r = vzero::fit_model(puro_treated_S, puro_treated_v, {}, builtin("mm"));
  REQUIRE(r.ok);
  const auto rows = vzero::diagnostics(puro_treated_S, {}, puro_treated_v, {}, r, 5);
  REQUIRE(rows.size() == 12 + 5);
  CHECK_FALSE(rows[0].curve);
  CHECK(rows[0].inv_s == 50);
  CHECK_REL(rows[0].inv_v, 1.0 / 76, 1e-15);
  CHECK_REL(rows[0].s_over_v, 0.02 / 76, 1e-15);
  CHECK_REL(rows[0].v_over_s, 76 / 0.02, 1e-15);
  const double v = r.parameters[0].estimate, k = r.parameters[1].estimate;
  for (std::size_t j = 12; j < rows.size(); ++j) {
    CHECK(rows[j].curve);
    // Michaelis–Menten in Lineweaver–Burk, Hanes–Woolf and Eadie–Hofstee form, exactly.
    CHECK_REL(rows[j].inv_v, 1 / v + (k / v) * rows[j].inv_s, 1e-12);
    CHECK_REL(rows[j].s_over_v, k / v + rows[j].s / v, 1e-12);
    CHECK_REL(rows[j].v, v - k * rows[j].v_over_s, 1e-12);
  }
  CHECK(rows[12].s == 0.02);
  CHECK_REL(rows.back().s, 1.10, 1e-15);
}

TEST_CASE("fit_table: filters role and flags, groups, units, kcat (Puromycin as a rates table)") {
  const auto table = vzero::read_table(vzero::test::data("fit_puromycin_rates.csv"));
  vzero::FitTableOptions o;
  o.x_column = "substrate_ppm";
  o.group_columns = {"state"};
  o.enzyme_column = "enzyme_nM";
  const auto t = vzero::fit_table(table, o);
  CHECK(t.y_column == "v0");
  CHECK(t.rows_read == 26);
  CHECK(t.rows_used == 23);
  CHECK(t.rows_other_role == 1);
  CHECK(t.rows_flagged == 1);
  CHECK(t.rows_missing == 1);
  CHECK(t.v_unit == "counts/min/min");
  CHECK(t.x_unit == "ppm");
  CHECK(t.enzyme_unit == "nM");
  REQUIRE(t.fits.size() == 2);
  CHECK(t.fits[0].group_values == std::vector<std::string>{"treated"});
  REQUIRE(t.fits[0].result.ok);
  CHECK_REL(t.fits[0].result.parameters[0].estimate, 212.683743142536, 1e-6);
  CHECK_REL(t.fits[1].result.parameters[1].estimate, 0.0477081845059544, 1e-6);
  REQUIRE(t.fits[0].derived.size() == 2);
  CHECK_REL(t.fits[0].derived[0].estimate, 212.683743142536 / 2, 1e-6);
  CHECK(t.fits[0].units ==
        std::vector<std::string>{"counts/min/min", "ppm", "counts/min/min per nM", "counts/min/min per nM per ppm"});
  const auto csv = vzero::parse_table("fit.csv", vzero::fit_csv(t));
  CHECK(csv.header == std::vector<std::string>{"state", "model", "parameter", "estimate", "se", "ci_low", "ci_high",
                                               "profile_low", "profile_high", "unit", "n", "df", "rss", "residual_sd",
                                               "aic", "converged", "iterations", "weighting", "message"});
  CHECK(csv.rows.size() == 8);  // 2 groups × (Vmax, Km, kcat, kcat/Km)
  const auto diag = vzero::parse_table("diag.csv", vzero::fit_diagnostics_csv(t));
  CHECK(diag.rows.size() == 23 + 2 * 41);
  CHECK_THROWS_WITH_AS(
      [&] {
        auto bad = o;
        bad.x_column = "conc";
        vzero::fit_table(table, bad);
      }(),
      doctest::Contains("expected a column named \"conc\""), vzero::InputError);
}

TEST_CASE("fit_table: summary table with v0_mean and replicate-sd weights 1/sd^2") {
  // Puromycin treated replicate pairs as a summary (mean, sd of each pair), computed here.
  std::string text = "state,substrate,v0_mean,v0_sd,n\n";
  std::vector<double> s, m, w;
  for (std::size_t k = 0; k < 12; k += 2) {
    const double a = puro_treated_v[k], b = puro_treated_v[k + 1];
    const double mean = (a + b) / 2, sd = std::fabs(a - b) / std::sqrt(2.0);
    text += "treated," + vzero::format_number(puro_treated_S[k]) + "," + vzero::format_number(mean) + "," +
            vzero::format_number(sd) + ",2\n";
    s.push_back(puro_treated_S[k]);
    m.push_back(mean);
    w.push_back(1 / (sd * sd));
  }
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  o.weighting = vzero::Weighting::replicate_sd;
  const auto t = vzero::fit_table(vzero::parse_table("summary.csv", text), o);
  CHECK(t.y_column == "v0_mean");
  CHECK(t.sd_column == "v0_sd");
  REQUIRE(t.fits.size() == 1);
  REQUIRE(t.fits[0].result.ok);
  const auto direct = vzero::fit_model(s, m, w, builtin("mm"));
  REQUIRE(direct.ok);
  CHECK_REL(t.fits[0].result.parameters[0].estimate, direct.parameters[0].estimate, 1e-12);
  CHECK_REL(t.fits[0].result.parameters[1].se, direct.parameters[1].se, 1e-12);
}

TEST_CASE("fit_table: replicate SDs from per-well rows, and weights that cannot be formed") {
  // Puromycin treated: each concentration has 2 wells; weight 1/sd^2 of the pair.
  std::string text = "substrate,v0\n";
  std::vector<double> w;
  for (std::size_t k = 0; k < 12; ++k) {
    text += vzero::format_number(puro_treated_S[k]) + "," + vzero::format_number(puro_treated_v[k]) + "\n";
    const double d = puro_treated_v[k - k % 2] - puro_treated_v[k - k % 2 + 1];
    w.push_back(2 / (d * d));  // sd of a pair = |a - b|/sqrt(2)
  }
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  o.weighting = vzero::Weighting::replicate_sd;
  const auto t = vzero::fit_table(vzero::parse_table("wells.csv", text), o);
  REQUIRE(t.fits.size() == 1);
  REQUIRE(t.fits[0].result.ok);
  const auto direct = vzero::fit_model(puro_treated_S, puro_treated_v, w, builtin("mm"));
  CHECK_REL(t.fits[0].result.parameters[1].estimate, direct.parameters[1].estimate, 1e-12);

  const auto single = vzero::fit_table(vzero::parse_table("wells.csv", "substrate,v0\n1,2\n2,3\n2,3.5\n4,4\n"), o);
  CHECK(single.fits[0].result.message ==
        "replicate-sd weighting: substrate 1 has 1 replicate(s) with sd 0; every concentration needs at least 2 "
        "replicates that differ");
  o.weighting = vzero::Weighting::relative;
  const auto negative = vzero::fit_table(vzero::parse_table("wells.csv", "substrate,v0\n1,-0.1\n2,3\n2,3.5\n4,4\n"), o);
  CHECK(negative.fits[0].result.message == "relative weighting (1/v^2) needs positive rates; 1 of 4 rates are <= 0");
}

TEST_CASE("no-substrate controls: v(0) = 0 is a data point, left out only under relative weighting") {
  // Puromycin treated (R nls, REFERENCES.md §4a) plus two rows at S = 0 with v = 0. Every
  // model gives v(0) = 0 whatever its parameters (closed form), so these points leave the
  // estimates and the RSS as R has them and add one degree of freedom each.
  std::vector<double> s = puro_treated_S, v = puro_treated_v;
  s.insert(s.begin(), {0.0, 0.0});
  v.insert(v.begin(), {0.0, 0.0});
  const auto r = vzero::fit_model(s, v, {}, builtin("mm"));
  REQUIRE(r.ok);
  CHECK(r.n == 14);
  CHECK(r.df == 12);
  CHECK_REL(r.parameters[0].estimate, 212.683743142536, 1e-6);
  CHECK_REL(r.parameters[1].estimate, 0.0641212816815671, 1e-6);
  CHECK_REL(r.rss, 1195.4488144393588, 1e-9);
  CHECK_REL(r.residual_sd, std::sqrt(1195.4488144393588 / 12), 1e-7);

  // As a table: the controls (here a rate 0.8 and one of -0.4, as blank-corrected controls
  // read) are kept unweighted; with relative weights 1/v^2 they have no weight, so they are
  // left out and counted, and the fit equals the weighted fit of the other 12 rows. (They
  // made the whole fit fail before: "relative weighting (1/v^2) needs positive rates".)
  std::string text = "substrate,v0\n0,0.8\n0,-0.4\n";
  std::vector<double> w;
  for (std::size_t k = 0; k < 12; ++k) {
    text += vzero::format_number(puro_treated_S[k]) + "," + vzero::format_number(puro_treated_v[k]) + "\n";
    w.push_back(1 / (puro_treated_v[k] * puro_treated_v[k]));
  }
  const auto table = vzero::parse_table("rates.csv", text);
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  const auto plain = vzero::fit_table(table, o);
  CHECK(plain.rows_used == 14);
  CHECK(plain.notes.empty());
  REQUIRE(plain.fits[0].result.ok);
  CHECK(plain.fits[0].result.df == 12);
  CHECK_REL(plain.fits[0].result.parameters[0].estimate, 212.683743142536, 1e-6);
  CHECK_REL(plain.fits[0].result.rss, 1195.4488144393588 + 0.8 * 0.8 + 0.4 * 0.4, 1e-9);
  o.weighting = vzero::Weighting::relative;
  const auto relative = vzero::fit_table(table, o);
  CHECK(relative.rows_read == 14);
  CHECK(relative.rows_used == 12);
  CHECK(relative.notes == std::vector<std::string>{"skipped 2 rows with substrate = 0 (no-substrate controls): every "
                                                   "model gives v = 0 there, and relative weighting (1/v^2) has no "
                                                   "weight for them"});
  REQUIRE(relative.fits[0].result.ok);
  const auto direct = vzero::fit_model(puro_treated_S, puro_treated_v, w, builtin("mm"));
  REQUIRE(direct.ok);
  CHECK(relative.fits[0].result.n == 12);
  CHECK_REL(relative.fits[0].result.parameters[0].estimate, direct.parameters[0].estimate, 1e-12);
  CHECK_REL(relative.fits[0].result.parameters[1].se, direct.parameters[1].se, 1e-12);
}

TEST_CASE("fit_table: a rate too large for a double says so; one too small for a double reads as 0") {
  // DBL_MAX = 1.7976931348623157e308 (C11 §5.2.4.2.2); 1e-400 rounds to 0 (IEEE 754, from memory).
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  try {
    vzero::fit_table(vzero::parse_table("rates.csv", "substrate,v0\n1,2\n2,1e999\n"), o);
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(e.formatted() ==
          "rates.csv:3:3: expected a number in column \"v0\", found \"1e999\", which is too large for a double (the "
          "largest is 1.7976931348623157e308)\n"
          "  possible fix: write numbers with '.' as the decimal mark and no units or thousands separators");
  }
  const auto t = vzero::fit_table(vzero::parse_table("rates.csv", "substrate,v0\n1e-400,1\n2,3\n"), o);
  REQUIRE(t.fits.at(0).s.size() == 2);
  CHECK(t.fits[0].s[0] == 0.0);
}

TEST_CASE("fit_table: global inhibition fit, JSON and per-level diagnostic curves") {
  std::vector<double> s, i, v;
  make_data({builtin("competitive"), {12, 50, 25}}, s, i, v);
  std::string text = "substrate,inhibitor_uM,v0\n";
  for (std::size_t k = 0; k < s.size(); ++k)
    text += vzero::format_number(s[k]) + "," + vzero::format_number(i[k]) + "," + vzero::format_number(v[k]) + "\n";
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  o.inhibitor_column = "inhibitor_uM";
  o.models = {&builtin("competitive"), &builtin("mm")};
  const auto t = vzero::fit_table(vzero::parse_table("inh.csv", text), o);
  REQUIRE(t.fits.size() == 2);
  REQUIRE(t.fits[0].result.ok);
  CHECK_REL(t.fits[0].result.parameters[2].estimate, 25, 1e-8);
  CHECK(t.fits[0].units[2] == "uM");
  const auto diag = vzero::parse_table("diag.csv", vzero::fit_diagnostics_csv(t));
  // competitive: 40 points + 4 inhibitor levels x 41; mm (pooled): 40 points + 41.
  CHECK(diag.rows.size() == 40 + 4 * 41 + 40 + 41);
  const auto j = nlohmann::json::parse(vzero::fit_json(t, o));
  CHECK(j["fits"].size() == 2);
  CHECK(j["fits"][0]["model"] == "competitive");
  CHECK(j["fits"][0]["parameters"][2]["name"] == "Kic");
  CHECK(j["fits"][0]["correlation"].size() == 3);
}

namespace {
struct Run {
  int status = -1;
  std::string out, err, command;
};

Run run_vzero(const std::filesystem::path& dir, const std::string& arguments) {
  Run r;
  r.command =
      "cd '" + dir.string() + "' && '" + std::string(VZERO_BINARY) + "' " + arguments + " > stdout.txt 2> stderr.txt";
  const int raw = std::system(r.command.c_str());
  r.status = WIFEXITED(raw) ? WEXITSTATUS(raw) : -1;
  r.out = read_file((dir / "stdout.txt").string());
  r.err = read_file((dir / "stderr.txt").string());
  return r;
}

std::filesystem::path temp_dir(const std::string& name) {
  auto dir = std::filesystem::temp_directory_path() / ("vzero_fit_test_" + name + "_" + std::to_string(::getpid()));
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  std::filesystem::copy_file(vzero::test::data("fit_puromycin_rates.csv"), dir / "rates.csv");
  return dir;
}
}  // namespace

TEST_CASE("CLI: vzero fit reproduces Puromycin from a rates table (REFERENCES.md §4a)") {
  const auto dir = temp_dir("ok");
  const Run r = run_vzero(dir,
                          "fit rates.csv --x substrate_ppm --group state --enzyme enzyme_nM -o fit.csv "
                          "--json fit.json --diagnostics diag.csv");
  INFO("command: " << r.command << "\nstdout:\n" << r.out << "\nstderr:\n" << r.err);
  REQUIRE(r.status == 0);
  const auto fit = vzero::read_table((dir / "fit.csv").string());
  const int param = fit.require_column("parameter", ""), est = fit.require_column("estimate", "");
  const int se = fit.require_column("se", ""), state = fit.require_column("state", "");
  int checked = 0;
  for (std::size_t k = 0; k < fit.rows.size(); ++k) {
    const auto& row = fit.rows[k];
    const bool treated = row[static_cast<std::size_t>(state)] == "treated";
    const std::string& p = row[static_cast<std::size_t>(param)];
    if (p == "Vmax") {
      CHECK_REL(*fit.number(k, est), treated ? 212.683743142536 : 160.280046182714, 1e-6);
      CHECK_REL(*fit.number(k, se), treated ? 6.94715516 : 6.48024550, 1e-5);
      ++checked;
    } else if (p == "Km") {
      CHECK_REL(*fit.number(k, est), treated ? 0.0641212816815671 : 0.0477081845059544, 1e-6);
      CHECK_REL(*fit.number(k, se), treated ? 0.00828094950 : 0.00778187524, 1e-5);
      ++checked;
    }
  }
  CHECK(checked == 4);
  CHECK(std::filesystem::exists(dir / "fit.json"));
  CHECK(std::filesystem::exists(dir / "diag.csv"));
  CHECK(r.out.find("state = treated | mm") != std::string::npos);
  std::filesystem::remove_all(dir);
}

TEST_CASE("CLI: bad usage exits 2, a missing column exits 1 naming the column and the option") {
  const auto dir = temp_dir("bad");
  {
    const Run r = run_vzero(dir, "fit rates.csv --x substrate_ppm --model quadratic");
    INFO("command: " << r.command << "\nstderr:\n" << r.err);
    CHECK(r.status == 2);
    CHECK(r.err ==
          "vzero fit: --model quadratic: unknown model; choose mm, substrate-inhibition, hill, competitive, "
          "uncompetitive, mixed, 4pl, morrison or all\n  see: vzero fit --help\n");
  }
  {
    const Run r = run_vzero(dir, "fit rates.csv --x substrate_ppm --model competitive");
    CHECK(r.status == 2);
    CHECK(r.err ==
          "vzero fit: --model competitive needs --inhibitor COLUMN (the inhibitor concentration)\n"
          "  see: vzero fit --help\n");
  }
  {
    const Run r = run_vzero(dir, "fit rates.csv --x conc");
    INFO("command: " << r.command << "\nstderr:\n" << r.err);
    CHECK(r.status == 1);
    CHECK(r.err ==
          "rates.csv:1: expected a column named \"conc\"; found: source, channel, well, row, column, role, "
          "substrate_ppm, state, enzyme_nM, v0, v0_se, v0_unit, flags\n"
          "  possible fix: pass --x with the substrate concentration column\n");
    CHECK_FALSE(std::filesystem::exists(dir / "fit.csv"));
  }
  {
    const Run r = run_vzero(dir, "fit --help");
    CHECK(r.status == 0);
    CHECK(r.out.find("--weight") != std::string::npos);
  }
  std::filesystem::remove_all(dir);
}
