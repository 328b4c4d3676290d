// Tests of kcat and kcat/Km (turnover, include/vzero/fit.hpp; units in
// src/fit/turnover_units.hpp; vzero fit's and vzero progress's kcat rows): the unit reduction
// worked by hand, the propagation of the estimates, SEs and intervals against closed forms
// (the delta method in SI units), and the profile-t interval of kcat/Km
// against R's nls of the refitted form (tests/reference/kcat/, R 4.2.2 from Debian's
// r-base-core; the script and its output are kept there, R is not needed to run this test).
#include <algorithm>
#include <array>
#include <cmath>
#include <map>

#include "fit/fit_models.hpp"
#include "fit/turnover_units.hpp"
#include "test_support.hpp"
#include "vzero/fit.hpp"
#include "vzero/progress.hpp"
#include "vzero/table.hpp"

namespace {

// R datasets::Puromycin (Treloar 1974, as given by Bates & Watts 1988, Appendix A1.3).
const std::vector<double> treated_S = {0.02, 0.02, 0.06, 0.06, 0.11, 0.11, 0.22, 0.22, 0.56, 0.56, 1.10, 1.10};
const std::vector<double> treated_v = {76, 47, 97, 107, 123, 139, 159, 152, 191, 201, 207, 200};
const std::vector<double> untreated_S = {0.02, 0.02, 0.06, 0.06, 0.11, 0.11, 0.22, 0.22, 0.56, 0.56, 1.10};
const std::vector<double> untreated_v = {67, 51, 84, 86, 98, 115, 131, 124, 144, 158, 160};

// tests/reference/kcat/specificity_reference.csv: quantity → value.
std::map<std::string, double> r_reference() {
  const vzero::Table t = vzero::read_table(vzero::test::source("tests/reference/kcat/specificity_reference.csv"));
  std::map<std::string, double> out;
  for (const auto& row : t.rows)
    if (row[0] != "r_version") out[row[0]] = std::strtod(row[1].c_str(), nullptr);
  return out;
}

}  // namespace

TEST_CASE("unit reduction: uM/min per nM is 1e3 per minute, 1e3/60 per second (worked by hand)") {
  // 2.395 uM/min per nM = 2.395e-6 M / 1e-9 M per min = 2.395e3 per min = 39.92 per s.
  const auto u = vzero::detail::turnover_units("uM/min", "nM", "uM", false);
  CHECK(u.why.empty());
  CHECK(u.kcat_unit == "1/s");
  CHECK(u.efficiency_unit == "1/s per M");
  CHECK_REL(2.395 * u.kcat_factor, 39.916666666666667, 1e-15);
  // 0.016 uM/min per nM per uM = 2.395e3/60 s⁻¹ ÷ 1e-6 M ... : 0.016·1e3/60/1e-6 = 2.6667e5 M⁻¹ s⁻¹.
  CHECK_REL(0.016 * u.efficiency_factor, 0.016 * 1e3 / 60 / 1e-6, 1e-15);
  CHECK_REL(0.016 * u.efficiency_factor, 266666.66666666667, 1e-15);
  const auto m = vzero::detail::turnover_units("uM/min", "nM", "uM", true);
  CHECK(m.kcat_unit == "1/min");
  CHECK(m.efficiency_unit == "1/min per M");
  CHECK_REL(2.395 * m.kcat_factor, 2395, 1e-15);
  CHECK_REL(0.016 * m.efficiency_factor, 1.6e7, 1e-15);
  // mM/s over uM: 1e-3/1e-6 = 1e3 s⁻¹ per unit; Km in mM: ÷1e-3 M → 1e6 (by hand).
  const auto s = vzero::detail::turnover_units("mM/s", "uM", "mM", false);
  CHECK_REL(s.kcat_factor, 1e3, 1e-15);
  CHECK_REL(s.efficiency_factor, 1e6, 1e-15);
  // nM/h over pM, Km in M: 1e-9/1e-12 = 1e3 per h = 1e3/3600 per s (by hand).
  const auto h = vzero::detail::turnover_units("nM/h", "pM", "M", false);
  CHECK_REL(h.kcat_factor, 1e3 / 3600, 1e-15);
  CHECK_REL(h.efficiency_factor, 1e3 / 3600, 1e-15);
}

TEST_CASE("units that cannot be reduced stay composite, with the reason") {
  const auto signal = vzero::detail::turnover_units("RFU/min", "nM", "uM", false);
  CHECK(signal.kcat_factor == 1);
  CHECK(signal.efficiency_factor == 1);
  CHECK(signal.kcat_unit == "RFU/min per nM");
  CHECK(signal.efficiency_unit == "RFU/min per nM per uM");
  CHECK(signal.why ==
        "kcat and kcat/Km stay in RFU/min per nM: the rate unit RFU/min is not a molar concentration per time "
        "(convert the signal to a concentration in vzero rates)");
  const auto no_enzyme_unit = vzero::detail::turnover_units("uM/min", "", "uM", false);
  CHECK(no_enzyme_unit.kcat_unit.empty());
  CHECK(no_enzyme_unit.why ==
        "kcat and kcat/Km stay in the table's units: the enzyme column gives no unit (name it with its unit, e.g. "
        "enzyme_nM, or give an enzyme_unit column)");
  const auto mass = vzero::detail::turnover_units("uM/min", "ug_ml", "uM", false);
  CHECK(mass.kcat_unit == "uM/min per ug_ml");
  CHECK(mass.kcat_why == "the enzyme unit ug_ml is not molar (M, mM, uM, nM, pM or fM)");
  const auto nested = vzero::detail::turnover_units("counts/min/min", "nM", "ppm", false);
  CHECK(nested.kcat_unit == "counts/min/min per nM");
  CHECK(nested.efficiency_unit == "counts/min/min per nM per ppm");
  // kcat reduces, kcat/Km cannot: Km in ppm has no molar value.
  const auto ppm = vzero::detail::turnover_units("uM/min", "nM", "ppm", false);
  CHECK(ppm.kcat_unit == "1/s");
  CHECK(ppm.efficiency_unit == "1/s per ppm");
  CHECK(ppm.efficiency_factor == ppm.kcat_factor);
  CHECK(ppm.why == "kcat/Km stays in 1/s per ppm: the substrate unit ppm is not molar");
  CHECK(ppm.kcat_why.empty());
  const auto no_x = vzero::detail::turnover_units("uM/min", "nM", "", false);
  CHECK(no_x.efficiency_unit.empty());
}

TEST_CASE("kcat/Km's profile-t interval: R's nls of v = a*S/(1 + S/K) (tests/reference/kcat)") {
  const auto ref = r_reference();
  struct Case {
    const char* name;
    std::vector<double> s, v;
    bool relative;
  };
  for (const Case& c :
       {Case{"treated", treated_S, treated_v, false}, Case{"untreated", untreated_S, untreated_v, false},
        Case{"treated_relative", treated_S, treated_v, true}}) {
    CAPTURE(c.name);
    std::vector<double> w;
    if (c.relative)
      for (double v : c.v) w.push_back(1 / (v * v));
    const auto fit = vzero::fit_model(c.s, c.v, w, vzero::kinetic_model("mm"));
    REQUIRE(fit.ok);
    const double e = 2.0;  // an enzyme level: every value of kcat/Km is a/[E]
    const auto d = vzero::turnover(fit, e, c.s, {}, c.v, w);
    REQUIRE(d.size() == 2);
    const std::string n = c.name;
    CHECK(d[1].name == "kcat/Km");
    CHECK_REL(d[1].estimate * e, ref.at(n + "_a"), 1e-7);
    CHECK_REL(d[1].se * e, ref.at(n + "_a_se"), 1e-6);
    CHECK_REL(d[1].profile_low * e, ref.at(n + "_a_profile_low"), 1e-6);
    CHECK_REL(d[1].profile_high * e, ref.at(n + "_a_profile_high"), 1e-6);
    // The refitted form reaches the same optimum: the same estimate and RSS to rounding.
    vzero::detail::FitPoints pts{c.s, std::vector<double>(c.s.size(), 0.0), c.v, w, {}};
    if (w.empty()) pts.w.assign(c.s.size(), 1.0);
    for (double x : pts.w) pts.sqrt_w.push_back(std::sqrt(x));
    const auto sf = vzero::detail::specificity_fit(fit, pts, d[1].se * e, {});
    CHECK(sf.converged);
    CHECK_REL(sf.estimate, fit.parameters[0].estimate / fit.parameters[1].estimate, 1e-9);
    CHECK_REL(sf.rss, fit.rss, 1e-12);
    CHECK_REL(sf.rss, ref.at(n + "_rss"), 1e-8);
  }
}

TEST_CASE("the refitted form's gradient is the chain rule's (finite differences, every built-in model)") {
  for (const vzero::KineticModel* m : vzero::kinetic_models()) {
    if (m->dose_response) continue;
    CAPTURE(m->name);
    const vzero::KineticModel& w = vzero::detail::specificity_form(*m);
    CHECK(w.parameters[0].name == "Vmax/" + m->parameters[1].name);
    std::vector<double> q;
    for (std::size_t j = 0; j < m->parameters.size(); ++j) q.push_back(j == 0 ? 800.0 : 0.3 + 0.2 * double(j));
    if (m->parameters.back().unit_role == vzero::UnitRole::none) q.back() = 1.7;  // Hill n
    std::vector<double> p = q;
    p[0] = q[0] * q[1];
    for (double s : {0.05, 0.4, 3.0}) {
      // Same rate as the model at Vmax = q0·q1 (the definition of the form).
      CHECK_REL(w.rate(q, s, 0.7, {}), m->rate(p, s, 0.7, {}), 1e-14);
      std::vector<double> g(q.size());
      w.rate(q, s, 0.7, g);
      for (std::size_t j = 0; j < q.size(); ++j) {
        auto up = q, dn = q;
        const double h = 1e-6 * q[j];
        up[j] += h, dn[j] -= h;
        CHECK_REL(g[j], (w.rate(up, s, 0.7, {}) - w.rate(dn, s, 0.7, {})) / (2 * h), 1e-7);  // central difference
      }
    }
  }
}

TEST_CASE("Vmax held: kcat/Km's profile is Km's mapped through Vmax/Km (same profile, any parameterisation)") {
  vzero::FitOptions o;
  o.fixed = {{"Vmax", 210.0}};
  const auto fit = vzero::fit_model(treated_S, treated_v, {}, vzero::kinetic_model("mm"), o);
  REQUIRE(fit.ok);
  const auto d = vzero::turnover(fit, 1.0, treated_S, {}, treated_v, {}, o);
  const auto& k = fit.parameters[1];
  CHECK_REL(d[1].profile_low, 210.0 / k.profile_high, 1e-15);
  CHECK_REL(d[1].profile_high, 210.0 / k.profile_low, 1e-15);
  CHECK(d[1].profile_low < d[1].estimate);
  CHECK(d[1].estimate < d[1].profile_high);
}

TEST_CASE("fit_table: kcat in 1/s and kcat/Km in 1/s per M, every column scaled by the unit's factor") {
  std::string text = "substrate_mM,v0,v0_unit,enzyme_nM\n";
  for (std::size_t k = 0; k < treated_S.size(); ++k)
    text += vzero::format_number(treated_S[k]) + "," + vzero::format_number(treated_v[k]) + ",uM/min,2\n";
  const auto table = vzero::parse_table("rates.csv", text);
  vzero::FitTableOptions o;
  o.x_column = "substrate_mM";
  o.enzyme_column = "enzyme_nM";
  const auto t = vzero::fit_table(table, o);
  REQUIRE(t.fits.size() == 1);
  const auto& g = t.fits[0];
  REQUIRE(g.result.ok);
  CHECK(t.notes.empty());
  CHECK(g.units == std::vector<std::string>{"uM/min", "mM", "1/s", "1/s per M"});
  // Closed form in SI units: V in M/s, K in M, [E] in M; delta method for V/([E]·K).
  const double to_si_v = 1e-6 / 60, to_si_k = 1e-3, e = 2e-9;
  const double v = g.result.parameters[0].estimate * to_si_v, km = g.result.parameters[1].estimate * to_si_k;
  const auto& c = g.result.covariance;
  const double cvv = c(0, 0) * to_si_v * to_si_v, ckk = c(1, 1) * to_si_k * to_si_k, cvk = c(0, 1) * to_si_v * to_si_k;
  CHECK_REL(g.derived[0].estimate, v / e, 1e-13);
  CHECK_REL(g.derived[0].se, std::sqrt(cvv) / e, 1e-12);
  CHECK_REL(g.derived[1].estimate, v / (e * km), 1e-13);
  const double var =
      cvv / (e * km * e * km) + ckk * v * v / (e * e * km * km * km * km) - 2 * cvk * v / (e * e * km * km * km);
  CHECK_REL(g.derived[1].se, std::sqrt(var), 1e-10);
  // Intervals: Wald ends are estimate ± t·SE in the new unit; profile ends R's a/[E] in SI.
  CHECK_REL(g.derived[1].ci_low, g.derived[1].estimate - g.result.t_quantile * g.derived[1].se, 1e-12);
  const auto ref = r_reference();
  CHECK_REL(g.derived[1].profile_low, ref.at("treated_a_profile_low") * to_si_v / to_si_k / e, 1e-6);
  CHECK_REL(g.derived[1].profile_high, ref.at("treated_a_profile_high") * to_si_v / to_si_k / e, 1e-6);
  CHECK_REL(g.derived[0].profile_high, g.result.parameters[0].profile_high * to_si_v / e, 1e-13);
  // The same fit with kcat per minute: 60 times the per-second values.
  o.kcat_per_min = true;
  const auto m = vzero::fit_table(table, o);
  CHECK(m.fits[0].units[2] == "1/min");
  CHECK_REL(m.fits[0].derived[0].estimate, 60 * g.derived[0].estimate, 1e-13);
  CHECK_REL(m.fits[0].derived[1].profile_low, 60 * g.derived[1].profile_low, 1e-12);
}

TEST_CASE("fit_table: a rate in signal per minute keeps the composite unit, and the console says why") {
  std::string text = "substrate_uM,v0,v0_unit,enzyme_nM\n";
  for (std::size_t k = 0; k < treated_S.size(); ++k)
    text += vzero::format_number(treated_S[k]) + "," + vzero::format_number(treated_v[k]) + ",RFU/min,2\n";
  vzero::FitTableOptions o;
  o.x_column = "substrate_uM";
  o.enzyme_column = "enzyme_nM";
  const auto t = vzero::fit_table(vzero::parse_table("rates.csv", text), o);
  REQUIRE(t.fits[0].result.ok);
  CHECK(t.fits[0].units[2] == "RFU/min per nM");
  CHECK(t.fits[0].units[3] == "RFU/min per nM per uM");
  CHECK_REL(t.fits[0].derived[0].estimate, t.fits[0].result.parameters[0].estimate / 2, 1e-15);  // V/[E], unscaled
  REQUIRE(t.notes.size() == 1);
  CHECK(t.notes[0].find("kcat and kcat/Km stay in RFU/min per nM: the rate unit RFU/min") == 0);
  CHECK(vzero::fit_text(t).find("  note: kcat and kcat/Km stay in RFU/min per nM") != std::string::npos);
}

TEST_CASE("vzero progress: the kcat rows in 1/s, or per min per enzyme unit with the reason") {
  // A fitted table made by hand: kcat 2.395 uM/min per nM (the progress fit's own unit).
  vzero::ProgressTable t;
  t.conc_unit = "uM";
  t.rate_unit = "uM/min";
  vzero::ProgressGroup g;
  g.mm.ok = true;
  g.mm.model = "mm";
  g.mm.n = 40, g.mm.df = 30;
  g.mm.rss = 1, g.mm.residual_sd = 0.2, g.mm.aic = -10;
  vzero::ParameterEstimate km{"Km", 150, 2, 146, 154, 146.1, 154.1};
  vzero::ParameterEstimate kcat{"kcat", 2.395, 0.006, 2.383, 2.407, 2.3831, 2.4071};
  g.mm.parameters = {km, kcat};
  g.rates_fit.message = "not fitted here";
  t.groups.push_back(g);
  const auto rows = vzero::parse_table("progress.csv", vzero::progress_csv(t, "enzyme_nM"));
  const auto col = [&](const char* n) { return static_cast<std::size_t>(rows.column(n)); };
  REQUIRE(rows.rows.size() == 3);  // Km, kcat, the initial-rates row without a fit
  const auto& k = rows.rows[1];
  CHECK(k[col("parameter")] == "kcat");
  CHECK(k[col("unit")] == "1/s");
  // 2.395 uM/min per nM = 2.395e3 per min = 39.9167 per s (by hand); every number scaled.
  CHECK_REL(std::strtod(k[col("estimate")].c_str(), nullptr), 39.916666666666667, 1e-15);
  CHECK_REL(std::strtod(k[col("se")].c_str(), nullptr), 0.1, 1e-14);
  CHECK_REL(std::strtod(k[col("profile_high")].c_str(), nullptr), 2.4071e3 / 60, 1e-14);
  CHECK(rows.rows[0][col("unit")] == "uM");  // Km as it was
  CHECK(vzero::progress_text(t, "enzyme_nM").find("kcat    1/s") != std::string::npos);
  // An enzyme column without a unit: the fitted unit, unscaled, and a note says why.
  const auto plain = vzero::parse_table("progress.csv", vzero::progress_csv(t, "enzyme"));
  CHECK(plain.rows[1][col("unit")] == "uM/min per enzyme unit");
  CHECK(plain.rows[1][col("estimate")] == "2.395");
  CHECK(vzero::progress_text(t, "enzyme")
            .find("note: kcat stays in uM/min per enzyme unit: the enzyme column gives "
                  "no unit") != std::string::npos);
}

namespace {

// Nelder–Mead on two variables (Nelder & Mead 1965, the standard coefficients 1, 2, 1/2,
// 1/2), restarted from its best point until a restart no longer improves: a minimiser that
// shares nothing with the fit's Levenberg–Marquardt.
template <class F>
double nelder_mead_min(F f, std::array<double, 2> x0, double step) {
  double best = f(x0);
  for (int restart = 0; restart < 20; ++restart) {
    std::array<std::array<double, 2>, 3> p = {x0, x0, x0};
    p[1][0] += step, p[2][1] += step;
    std::array<double, 3> y = {f(p[0]), f(p[1]), f(p[2])};
    for (int it = 0; it < 4000; ++it) {
      std::array<int, 3> o = {0, 1, 2};
      std::sort(o.begin(), o.end(), [&](int a, int b) { return y[a] < y[b]; });
      const int lo = o[0], mid = o[1], hi = o[2];
      if (std::fabs(y[hi] - y[lo]) <= 1e-15 * std::fabs(y[lo])) break;
      const std::array<double, 2> c = {(p[lo][0] + p[mid][0]) / 2, (p[lo][1] + p[mid][1]) / 2};
      auto along = [&](double t) {
        return std::array<double, 2>{c[0] + t * (p[hi][0] - c[0]), c[1] + t * (p[hi][1] - c[1])};
      };
      const auto r = along(-1);
      const double yr = f(r);
      if (yr < y[lo]) {
        const auto e = along(-2);
        const double ye = f(e);
        if (ye < yr)
          p[hi] = e, y[hi] = ye;
        else
          p[hi] = r, y[hi] = yr;
      } else if (yr < y[mid]) {
        p[hi] = r, y[hi] = yr;
      } else {
        const auto k = along(0.5);
        const double yk = f(k);
        if (yk < y[hi]) {
          p[hi] = k, y[hi] = yk;
        } else {
          for (int v : {mid, hi}) {
            p[v] = {(p[v][0] + p[lo][0]) / 2, (p[v][1] + p[lo][1]) / 2};
            y[v] = f(p[v]);
          }
        }
      }
    }
    const int b = static_cast<int>(std::min_element(y.begin(), y.end()) - y.begin());
    const bool improved = y[b] < best * (1 - 1e-14);
    best = std::min(best, y[b]);
    x0 = p[b];
    step /= 4;
    if (!improved && restart > 2) break;
  }
  return best;
}

}  // namespace

TEST_CASE("kcat/Km's profile limits of a three-parameter model solve the profile equation (brute force)") {
  // Competitive inhibition, invented: Vmax 12, Km 150, Kic 40, with a fixed pattern of noise.
  std::vector<double> s, inh, v;
  const double noise[] = {0.05, -0.08, 0.02, 0.11, -0.04, -0.09, 0.07, 0.01, -0.06, 0.03, 0.09, -0.02};
  int k = 0;
  for (double i : {0.0, 20.0, 80.0})
    for (double x : {25.0, 50.0, 100.0, 200.0, 400.0, 800.0}) {
      s.push_back(x), inh.push_back(i);
      v.push_back(12 * x / (150 * (1 + i / 40) + x) + noise[k++ % 12]);
    }
  const auto& m = vzero::kinetic_model("competitive");
  const auto fit = vzero::fit_inhibition(s, inh, v, {}, m);
  REQUIRE(fit.ok);
  const auto d = vzero::turnover(fit, 1.0, s, inh, v, {});
  REQUIRE(std::isfinite(d[1].profile_low));
  REQUIRE(std::isfinite(d[1].profile_high));
  // RSS minimised over ln Km and ln Kic with Vmax = a·Km (the profile's definition).
  auto profile_rss = [&](double a) {
    return nelder_mead_min(
        [&](std::array<double, 2> x) {
          const std::vector<double> p = {a * std::exp(x[0]), std::exp(x[0]), std::exp(x[1])};
          double rss = 0;
          for (std::size_t j = 0; j < v.size(); ++j) {
            const double r = v[j] - m.rate(p, s[j], inh[j], {});
            rss += r * r;
          }
          return rss;
        },
        {std::log(fit.parameters[1].estimate), std::log(fit.parameters[2].estimate)}, 0.2);
  };
  CHECK_REL(profile_rss(d[1].estimate), fit.rss, 1e-9);
  for (double limit : {d[1].profile_low, d[1].profile_high}) {
    const double tau = std::sqrt(profile_rss(limit) - fit.rss) / fit.residual_sd;
    CHECK_REL(tau, fit.t_quantile, 1e-5);  // |τ| = t(0.975, df) at each limit
  }
  CHECK(d[1].profile_low < d[1].estimate);
  CHECK(d[1].estimate < d[1].profile_high);
}
