// Tests of the kinetics fit (include/vzero/fit.hpp): estimates, intervals, models, weights,
// diagnostics; fit_table and `vzero fit` are in fit_table_test.cpp.
// Reference values: shared REFERENCES.md §4 (Puromycin, Misra1d) unless said otherwise.
#include "vzero/fit.hpp"

#include <array>
#include <cmath>
#include <map>

#include "fit_data.hpp"
#include "kinetic_check.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/table.hpp"

using namespace vzero::test;

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
