// Tests of the dose-response models (src/fit/dose_response.cpp): the four-parameter logistic
// (4pl) and the Morrison tight-binding equation (morrison). Sources of the check values:
// closed forms worked here; noiseless data made from the formula (exact recovery); R 4.2.2's
// nls with the SSfpl self-starting model (tests/reference/fpl: the script fpl_reference.R,
// its output fpl_reference.csv, the invented data doses.csv).
#include <cmath>
#include <map>
#include <string>

#include "kinetic_check.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/table.hpp"

namespace {

const vzero::KineticModel& fpl() { return vzero::kinetic_model("4pl"); }
const vzero::KineticModel& morrison() { return vzero::kinetic_model("morrison"); }

const std::string k_ref = std::string(VZERO_SOURCE_DIR) + "/tests/reference/fpl/";

// fpl_reference.csv as quantity → value (the R version row kept as text).
std::map<std::string, std::string> r_reference() {
  const vzero::Table t = vzero::read_table(k_ref + "fpl_reference.csv");
  std::map<std::string, std::string> out;
  for (const auto& row : t.rows) out[row.at(0)] = row.at(1);
  return out;
}
double r_value(const std::map<std::string, std::string>& r, const std::string& name) {
  REQUIRE(r.count(name) == 1);
  return std::stod(r.at(name));
}

// The fit of doses.csv by fit_table (x inhibitor_uM, y activity), one group.
vzero::GroupFit fit_doses(std::map<std::string, double> fixed) {
  vzero::FitTableOptions o;
  o.x_column = "inhibitor_uM";
  o.y_column = "activity";
  o.models = {&fpl()};
  o.fit.fixed = std::move(fixed);
  vzero::TableFit t = vzero::fit_table(vzero::read_table(k_ref + "doses.csv"), o);
  REQUIRE(t.fits.size() == 1);
  CHECK(t.x_unit == "uM");  // from the column's _uM suffix
  return t.fits[0];
}

constexpr double k_sig4 = 5e-5;  // agreement to 4 significant figures

}  // namespace

TEST_CASE("4pl: closed forms of the curve (worked here)") {
  const std::vector<double> p = {5, 95, 0.3, 1.4};                                 // bottom, top, IC50 uM, hill
  CHECK(fpl().rate(p, 0, 0, {}) == 95);                                            // no inhibitor: top
  CHECK_REL(fpl().rate(p, 0.3, 0, {}), 50, 1e-15);                                 // x = IC50: half-way, (5 + 95)/2
  CHECK_REL(fpl().rate(p, 0.6, 0, {}), 5 + 90 / (1 + std::pow(2.0, 1.4)), 1e-14);  // x = 2·IC50
  CHECK_REL(fpl().rate(p, 1e9, 0, {}), 5, 1e-9);                                   // saturating inhibitor: bottom
  vzero::test::check_gradient(fpl(), {5, 95, 30, 1.4});  // central differences (kinetic_check.hpp)
  vzero::test::check_gradient(fpl(), {-2, 40, 400, 0.8});
}

TEST_CASE("4pl: exact recovery on noiseless data, free, with a negative bottom, and with top and bottom held") {
  const std::vector<double> x = {0, 0.003, 0.01, 0.03, 0.1, 0.3, 1, 3, 10, 30, 100};
  for (const std::vector<double>& truth : {std::vector<double>{5, 95, 0.3, 1.4}, std::vector<double>{-3, 60, 2.5, 0.7},
                                           std::vector<double>{0, 100, 0.05, 2.2}}) {
    CAPTURE(truth[0]);
    std::vector<double> y;
    for (double c : x) y.push_back(fpl().rate(truth, c, 0, {}));  // the formula (closed form) at each x
    vzero::FitResult r = vzero::fit_model(x, y, {}, fpl());
    INFO(r.message);
    REQUIRE(r.ok);
    for (std::size_t k = 0; k < 4; ++k) CHECK_ABS(r.parameters[k].estimate, truth[k], 1e-8 * (1 + std::fabs(truth[k])));
    CHECK(r.df == 7);
    if (truth[0] == 0) {
      vzero::FitOptions o;
      o.fixed = {{"top", 100}, {"bottom", 0}};
      r = vzero::fit_model(x, y, {}, fpl(), o);
      REQUIRE(r.ok);
      CHECK(r.df == 9);  // 11 points, 2 fitted parameters
      CHECK(r.parameters[0].estimate == 0);
      CHECK(r.parameters[1].estimate == 100);
      CHECK(std::isnan(r.parameters[1].se));  // held: not estimated
      CHECK_REL(r.parameters[2].estimate, 0.05, 1e-9);
      CHECK_REL(r.parameters[3].estimate, 2.2, 1e-9);
      CHECK(r.warnings.at(0) == "bottom fixed at 0 (not estimated)");
    }
  }
}

TEST_CASE("4pl agrees with R's nls/SSfpl to 4 significant figures (tests/reference/fpl, R 4.2.2)") {
  const auto r = r_reference();
  CHECK(r.at("r_version").rfind("R version 4.2.2", 0) == 0);  // the R that wrote the values
  const vzero::GroupFit g = fit_doses({});
  INFO(g.result.message);
  REQUIRE(g.result.ok);
  const auto& p = g.result.parameters;  // bottom, top, IC50, hill
  // SSfpl: A = top, B = bottom, xmid = ln IC50, scal = 1/hill. The tangent-plane covariance
  // maps exactly by the derivative of the change of parameters: se(IC50) = IC50·se(xmid),
  // se(hill) = se(scal)/scal²; profile-t limits map through the same monotone functions.
  CHECK_REL(p[1].estimate, r_value(r, "free_A"), k_sig4);
  CHECK_REL(p[1].se, r_value(r, "free_A_se"), k_sig4);
  CHECK_REL(p[1].profile_low, r_value(r, "free_A_profile_low"), k_sig4);
  CHECK_REL(p[1].profile_high, r_value(r, "free_A_profile_high"), k_sig4);
  CHECK_REL(p[0].estimate, r_value(r, "free_B"), k_sig4);
  CHECK_REL(p[0].se, r_value(r, "free_B_se"), k_sig4);
  CHECK_REL(p[0].profile_low, r_value(r, "free_B_profile_low"), k_sig4);
  CHECK_REL(p[0].profile_high, r_value(r, "free_B_profile_high"), k_sig4);
  const double xmid = r_value(r, "free_xmid"), scal = r_value(r, "free_scal");
  CHECK_REL(p[2].estimate, std::exp(xmid), k_sig4);
  CHECK_REL(p[2].se, std::exp(xmid) * r_value(r, "free_xmid_se"), k_sig4);
  CHECK_REL(p[2].profile_low, std::exp(r_value(r, "free_xmid_profile_low")), k_sig4);
  CHECK_REL(p[2].profile_high, std::exp(r_value(r, "free_xmid_profile_high")), k_sig4);
  CHECK_REL(p[3].estimate, 1 / scal, k_sig4);
  CHECK_REL(p[3].se, r_value(r, "free_scal_se") / (scal * scal), k_sig4);
  CHECK_REL(p[3].profile_low, 1 / r_value(r, "free_scal_profile_high"), k_sig4);
  CHECK_REL(p[3].profile_high, 1 / r_value(r, "free_scal_profile_low"), k_sig4);
  CHECK_REL(g.result.rss, r_value(r, "free_rss"), k_sig4);
  CHECK_REL(g.result.residual_sd, r_value(r, "free_residual_sd"), k_sig4);
  CHECK(g.result.df == static_cast<int>(r_value(r, "free_df")));
  CHECK_REL(g.result.aic, r_value(r, "free_aic"), k_sig4);
  // pIC50 = −log10(IC50 in M), x in uM: −log10(e^xmid · 1e-6) = 6 − xmid/ln 10.
  REQUIRE(g.derived.size() == 1);
  CHECK(g.derived[0].name == "pIC50");
  CHECK_REL(g.derived[0].estimate, 6 - xmid / std::log(10.0), k_sig4);
  CHECK_REL(g.derived[0].se, r_value(r, "free_xmid_se") / std::log(10.0), k_sig4);
  CHECK_REL(g.derived[0].profile_low, 6 - r_value(r, "free_xmid_profile_high") / std::log(10.0), k_sig4);
  CHECK(g.units.back() == "log10(1/M)");
  CHECK(g.units[2] == "uM");
}

TEST_CASE("4pl with top 100 and bottom 0 held agrees with R's nls on the same curve (fpl_reference.R)") {
  const auto r = r_reference();
  const vzero::GroupFit g = fit_doses({{"top", 100}, {"bottom", 0}});
  REQUIRE(g.result.ok);
  const auto& p = g.result.parameters;
  const double xmid = r_value(r, "held_xmid"), scal = r_value(r, "held_scal");
  CHECK_REL(p[2].estimate, std::exp(xmid), k_sig4);
  CHECK_REL(p[2].se, std::exp(xmid) * r_value(r, "held_xmid_se"), k_sig4);
  CHECK_REL(p[2].profile_low, std::exp(r_value(r, "held_xmid_profile_low")), k_sig4);
  CHECK_REL(p[2].profile_high, std::exp(r_value(r, "held_xmid_profile_high")), k_sig4);
  CHECK_REL(p[3].estimate, 1 / scal, k_sig4);
  CHECK_REL(p[3].profile_low, 1 / r_value(r, "held_scal_profile_high"), k_sig4);
  CHECK_REL(g.result.rss, r_value(r, "held_rss"), k_sig4);
  CHECK(g.result.df == static_cast<int>(r_value(r, "held_df")));
  CHECK_REL(g.result.aic, r_value(r, "held_aic"), k_sig4);  // R counts the 2 fitted parameters
}

// The Morrison activity v0·f at inhibitor x for (v0, Ki_app, E).
double morrison_at(std::vector<double> p, double x) { return morrison().rate(p, x, 0, {}); }

TEST_CASE("morrison: closed forms worked here") {
  const auto& m = morrison();
  CHECK(m.parameter_names() == std::vector<std::string>{"v0", "Ki_app", "E"});
  // [I] = 0: no inhibition, y = v0.
  CHECK(morrison_at({50, 0.002, 0.01}, 0) == 50);
  // [E] → 0: the hyperbola Ki/(Ki + [I]) (E = 1e-12 of Ki: equal to 1e-11).
  for (double i : {0.001, 0.02, 3.0}) CHECK_REL(morrison_at({1, 0.02, 2e-14}, i), 0.02 / (0.02 + i), 1e-11);
  // [E] = [I] = Ki = 1: 1 − (3 − √(9 − 4))/2 = (√5 − 1)/2.
  CHECK_REL(morrison_at({1, 1, 1}, 1), (std::sqrt(5.0) - 1) / 2, 1e-15);
  // Ki → 0 (stoichiometric titration), [I] < [E]: activity 1 − [I]/[E]; 1e-9 of E: 1e-8 close.
  CHECK_REL(morrison_at({1, 1e-9, 1}, 0.25), 0.75, 1e-8);
  vzero::test::check_gradient(m, {50, 20, 40});
  vzero::test::check_gradient(m, {1, 300, 5});
}

TEST_CASE("morrison: exact recovery on noiseless data with [E] given by --fix or by the enzyme column") {
  const std::vector<double> truth = {50, 0.002, 0.01};  // v0, Ki_app uM, E uM (invented)
  const std::vector<double> x = {0, 0.001, 0.002, 0.004, 0.006, 0.008, 0.01, 0.015, 0.02, 0.04, 0.08};
  std::vector<double> y;
  for (double c : x) y.push_back(morrison().rate(truth, c, 0, {}));
  vzero::FitOptions o;
  o.fixed = {{"E", 0.01}};
  const vzero::FitResult r = vzero::fit_model(x, y, {}, morrison(), o);
  INFO(r.message);
  REQUIRE(r.ok);
  CHECK_REL(r.parameters[0].estimate, 50, 1e-9);
  CHECK_REL(r.parameters[1].estimate, 0.002, 1e-9);
  CHECK(r.df == 9);
  // Without [E] the fit says what it needs.
  const vzero::FitResult none = vzero::fit_model(x, y, {}, morrison());
  CHECK_FALSE(none.ok);
  CHECK(none.message.find("--fix E=VALUE") != std::string::npos);
  // From a map column of the table, in x's unit.
  std::string csv = "inhibitor_uM,v0,enzyme_uM\n";
  for (std::size_t k = 0; k < x.size(); ++k)
    csv += vzero::format_number(x[k]) + "," + vzero::format_number(y[k]) + ",0.01\n";
  vzero::FitTableOptions to;
  to.x_column = "inhibitor_uM";
  to.enzyme_column = "enzyme_uM";
  to.models = {&morrison(), &fpl()};
  const vzero::TableFit t = vzero::fit_table(vzero::parse_table("morrison.csv", csv), to);
  REQUIRE(t.fits.size() == 2);
  REQUIRE(t.fits[0].result.ok);
  CHECK_REL(t.fits[0].result.parameters[1].estimate, 0.002, 1e-9);
  CHECK(t.fits[0].derived.empty());  // no kcat from a dose-response model
  // An enzyme column in another unit than x is refused, naming both.
  std::string other = csv;
  other.replace(other.find("enzyme_uM"), 9, "enzyme_nM");
  to.enzyme_column = "enzyme_nM";
  const vzero::TableFit bad = vzero::fit_table(vzero::parse_table("morrison.csv", other), to);
  CHECK_FALSE(bad.fits[0].result.ok);
  CHECK(bad.fits[0].result.message.find("is in nM, the inhibitor concentration inhibitor_uM in uM") !=
        std::string::npos);
}

TEST_CASE("dose-response fits the data cannot support give a message, not a number") {
  vzero::FitResult r = vzero::fit_model({0, 0.1, 1, 0, 0.1, 1}, {100, 80, 20, 98, 82, 19}, {}, fpl());
  CHECK_FALSE(r.ok);
  CHECK(r.message ==
        "only 3 different inhibitor concentrations for 4 fitted parameters of the 4pl model; a dose-response curve "
        "needs at least 4");
  vzero::FitOptions o;
  o.fixed = {{"slope", 1}};
  CHECK_THROWS_AS(vzero::fit_model({0, 0.1, 1, 10, 100}, {100, 80, 20, 5, 1}, {}, fpl(), o), vzero::UsageError);
  // No fall within the concentrations: IC50 runs off.
  r = vzero::fit_model({0.001, 0.01, 0.1, 1, 10, 100}, {100, 99, 101, 100, 99.5, 100.2}, {}, fpl());
  CHECK_FALSE(r.ok);
  INFO(r.message);
}

TEST_CASE("vzero fit --model 4pl --fix: the fit table holds the held values without SE, then pIC50") {
  vzero::test::TempDir dir;
  const auto r = vzero::test::run_vzero("fit '" + k_ref + "doses.csv' --x inhibitor_uM --y activity --model 4pl " +
                                        "--fix top=100,bottom=0 -q -o '" + (dir / "fit.csv") + "'");
  INFO(r.describe());
  REQUIRE(r.status == 0);
  const vzero::Table t = vzero::read_table(dir / "fit.csv");
  const int name = t.require_column("parameter", ""), est = t.require_column("estimate", "");
  const int se = t.require_column("se", ""), unit = t.require_column("unit", "");
  REQUIRE(t.rows.size() == 5);  // bottom, top, IC50, hill, pIC50
  CHECK(t.rows[1][static_cast<std::size_t>(name)] == "top");
  CHECK(*t.number(1, est) == 100);
  CHECK(t.rows[1][static_cast<std::size_t>(se)].empty());
  CHECK(t.rows[4][static_cast<std::size_t>(name)] == "pIC50");
  CHECK(t.rows[4][static_cast<std::size_t>(unit)] == "log10(1/M)");
  CHECK_REL(*t.number(4, est), 6 - r_value(r_reference(), "held_xmid") / std::log(10.0), k_sig4);  // R, as above
  // A name the model lacks is bad usage, naming the model's parameters.
  const auto bad = vzero::test::run_vzero("fit '" + k_ref + "doses.csv' --x inhibitor_uM --y activity --model 4pl " +
                                          "--fix Vmax=1 -q");
  CHECK(bad.status == 2);
  CHECK(bad.err.find("--fix Vmax=1: the 4pl model has no parameter Vmax (its parameters: bottom, top, IC50, hill)") !=
        std::string::npos);
}
