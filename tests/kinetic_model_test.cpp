// Adding a kinetic model by one object (include/vzero/kinetic_model.hpp): the registry finds
// it, the fit recovers its parameters from noiseless data, fit_table and the fit outputs carry
// its parameters with their units, and `vzero fit` (its command run in this process, linked
// with src/cli/cmd_fit.cpp) lists it in --help, accepts --model NAME and writes its rows.
#include "vzero/kinetic_model.hpp"

#include <nlohmann/json.hpp>

#include "cli/commands.hpp"
#include "kinetic_check.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/table.hpp"

// `vzero fit` prints through these (src/cli/main.cpp defines them for the program); here
// they collect the text for the checks.
namespace {
std::string g_out, g_err;
}
namespace vzero::cli {
void print_out(const std::string& text) { g_out += text; }
void print_err(const std::string& text) { g_err += text + "\n"; }
}  // namespace vzero::cli

namespace {

// Essential activation, rapid equilibrium: the activator A must bind before S can, so
//   v = Vmax·S/(Km·(1 + Ka/A) + S)
// (from memory: Segel, Enzyme Kinetics, 1975, ch. 4, "essential activation"). With no
// activator there is no activity: v = 0 at A = 0. Its Hanes–Woolf form is exact:
//   S/v = Km/Vmax + (Km·Ka/Vmax)·(1/A) + S/Vmax  (worked here).
// The activator concentrations are read from the inhibitor column (unit role inhibitor: the
// constant Ka carries that column's unit).
vzero::KineticModel essential_activation() {
  vzero::KineticModel m;
  m.name = "essential-activation";
  m.aliases = {"essential-activator"};
  m.description = "essential activation: the activator (in the inhibitor column) must bind before the substrate";
  m.formula = "v = Vmax*S/(Km*(1 + Ka/I) + S)";
  m.parameters = {{"Vmax", vzero::UnitRole::rate, "limiting rate at saturating substrate and activator"},
                  {"Km", vzero::UnitRole::substrate, "substrate concentration at half Vmax, saturating activator"},
                  {"Ka", vzero::UnitRole::inhibitor, "dissociation constant of the activator"}};
  m.rate = [](std::span<const double> p, double s, double a, std::span<double> g) {
    const double vmax = p[0], km = p[1], ka = p[2];
    if (!(a > 0)) {
      for (double& e : g) e = 0.0;
      return 0.0;
    }
    const double f = 1.0 + ka / a, d = km * f + s;
    if (!g.empty()) {
      g[0] = s / d;
      g[1] = -vmax * s * f / (d * d);
      g[2] = -vmax * s * km / (a * d * d);
    }
    return vmax * s / d;
  };
  vzero::Linearisation l;
  l.method = "Hanes-Woolf (activator)";
  l.columns = 3;
  l.row = [](double s, double a, double v, double, std::span<double> x, double& y) {
    if (!(a > 0)) return false;
    x[0] = 1.0, x[1] = 1.0 / a, x[2] = s;
    y = s / v;
    return true;
  };
  // b = (Km/Vmax, Km·Ka/Vmax, 1/Vmax).
  l.parameters = [](std::span<const double> b, double) {
    return std::vector<double>{1 / b[2], b[0] / b[2], b[1] / b[0]};
  };
  m.linearisation = l;
  return m;
}

// Registered once for the whole program (the registry lives as long as it does).
const vzero::KineticModel& added() {
  static const vzero::KineticModel& m = vzero::register_kinetic_model(essential_activation());
  return m;
}

const std::vector<double> truth = {20.0, 50.0, 15.0};  // Vmax uM/min, Km mM, Ka uM (invented)

// Noiseless rates on a 10 × 4 substrate × activator design, as a table.
std::string activation_table() {
  std::string text = "substrate_mM,activator_uM,v0,v0_unit\n";
  for (double a : {5.0, 15.0, 45.0, 135.0})
    for (double s : {2.5, 5.0, 10.0, 20.0, 40.0, 80.0, 160.0, 320.0, 640.0, 1280.0})
      text += vzero::format_number(s) + "," + vzero::format_number(a) + "," +
              vzero::format_number(added().rate(truth, s, a, {})) + ",uM/min\n";
  return text;
}

}  // namespace

TEST_CASE("a model added by one object is found by name, alias and in the registry's order") {
  const vzero::KineticModel& m = added();
  CHECK(vzero::find_model("essential-activation") == &m);
  CHECK(vzero::find_model("Essential-Activator") == &m);
  CHECK(&vzero::kinetic_model("essential-activation") == &m);
  const auto all = vzero::kinetic_models();
  REQUIRE(all.size() == 9);
  CHECK(all.front()->name == "mm");
  CHECK(all.back() == &m);
  CHECK(m.needs_inhibitor());
  CHECK(m.substrate_levels_needed() == 2);
  CHECK(m.parameter_names() == std::vector<std::string>{"Vmax", "Km", "Ka"});
  CHECK_THROWS_WITH_AS(vzero::kinetic_model("quadratic"),
                       "unknown kinetic model \"quadratic\"; the models are mm, substrate-inhibition, hill, "
                       "competitive, uncompetitive, mixed, 4pl, morrison, essential-activation",
                       vzero::UsageError);
  // The registry keeps its contract.
  CHECK_THROWS_WITH_AS(vzero::register_kinetic_model(essential_activation()),
                       "register_kinetic_model(essential-activation): the name \"essential-activation\" is taken",
                       vzero::UsageError);
  vzero::KineticModel bad = essential_activation();
  bad.name = "ka-first";
  bad.aliases.clear();
  std::swap(bad.parameters[0], bad.parameters[2]);
  CHECK_THROWS_WITH_AS(vzero::register_kinetic_model(bad),
                       "register_kinetic_model(ka-first): parameter 1 (Ka) must be the limiting rate (unit role rate)",
                       vzero::UsageError);
  vzero::KineticModel unitless = essential_activation();
  unitless.name = "unitless";
  unitless.aliases.clear();
  unitless.parameters[2].unit_role = vzero::UnitRole::none;
  CHECK_THROWS_WITH_AS(vzero::register_kinetic_model(unitless),
                       "register_kinetic_model(unitless): parameter Ka has no data unit, so it needs its own search "
                       "box 0 < lo < hi and grid values inside it",
                       vzero::UsageError);
  CHECK(vzero::kinetic_models().size() == 9);
}

TEST_CASE("the added model: analytic gradient, and exact recovery from noiseless data (closed form above)") {
  const vzero::KineticModel& m = added();
  vzero::test::check_gradient(m, vzero::test::probe_parameters(m));
  vzero::test::check_gradient(m, truth);
  const vzero::Table t = vzero::parse_table("activation.csv", activation_table());
  std::vector<double> s, a, v;
  for (std::size_t r = 0; r < t.rows.size(); ++r) {
    s.push_back(*t.number(r, 0));
    a.push_back(*t.number(r, 1));
    v.push_back(*t.number(r, 2));
  }
  const vzero::FitResult r = vzero::fit_inhibition(s, a, v, {}, m);
  INFO(r.message);
  REQUIRE(r.ok);
  CHECK(r.model == &m);
  // The Hanes–Woolf form is exact for noiseless rates, so its start is already the truth.
  CHECK(r.start_method == "Hanes-Woolf (activator)");
  REQUIRE(r.start.size() == 3);
  for (std::size_t k = 0; k < 3; ++k) CHECK_REL(r.start[k], truth[k], 1e-9);
  for (std::size_t k = 0; k < 3; ++k) {
    CAPTURE(k);
    CHECK(r.parameters[k].name == m.parameters[k].name);
    CHECK_REL(r.parameters[k].estimate, truth[k], 1e-6);
  }
  // Search boxes follow the unit roles: Ka's from the activator (inhibitor) column.
  const auto box = vzero::parameter_bounds(m, {20, 2.5, 1280, 5, 135});
  CHECK(box.lo == std::vector<double>{20e-6, 2.5e-6, 5e-6});
  CHECK(box.hi == std::vector<double>{20e6, 1280e6, 135e6});
}

TEST_CASE("fit_table and the fit outputs carry the added model's parameters with their units") {
  const vzero::KineticModel& m = added();
  vzero::FitTableOptions o;
  o.x_column = "substrate_mM";
  o.inhibitor_column = "activator_uM";
  o.models = {&m};
  const vzero::TableFit tf = vzero::fit_table(vzero::parse_table("activation.csv", activation_table()), o);
  REQUIRE(tf.fits.size() == 1);
  REQUIRE(tf.fits[0].result.ok);
  // Units by unit role: v's (the v0_unit column), x's and the inhibitor column's (name suffixes).
  CHECK(tf.fits[0].units == std::vector<std::string>{"uM/min", "mM", "uM"});
  const vzero::Table csv = vzero::parse_table("fit.csv", vzero::fit_csv(tf));
  REQUIRE(csv.rows.size() == 3);
  const int model = csv.require_column("model", ""), param = csv.require_column("parameter", "");
  const int unit = csv.require_column("unit", ""), est = csv.require_column("estimate", "");
  const std::vector<std::string> units = {"uM/min", "mM", "uM"};
  for (std::size_t k = 0; k < 3; ++k) {
    CHECK(csv.rows[k][static_cast<std::size_t>(model)] == "essential-activation");
    CHECK(csv.rows[k][static_cast<std::size_t>(param)] == m.parameters[k].name);
    CHECK(csv.rows[k][static_cast<std::size_t>(unit)] == units[k]);
    CHECK_REL(*csv.number(k, est), truth[k], 1e-6);
  }
  const auto j = nlohmann::json::parse(vzero::fit_json(tf, o));
  CHECK(j["options"]["models"] == nlohmann::json::array({"essential-activation"}));
  CHECK(j["fits"][0]["formula"] == "v = Vmax*S/(Km*(1 + Ka/I) + S)");
  CHECK(j["fits"][0]["parameters"][2]["name"] == "Ka");
  CHECK(j["fits"][0]["parameters"][2]["unit"] == "uM");
  CHECK(j["fits"][0]["start_method"] == "Hanes-Woolf (activator)");
  // The diagnostics draw one curve per activator level.
  CHECK(vzero::parse_table("d.csv", vzero::fit_diagnostics_csv(tf)).rows.size() == 40 + 4 * 41);
}

TEST_CASE("vzero fit lists the added model in --help, accepts --model NAME and writes its rows") {
  const vzero::KineticModel& m = added();
  g_out.clear();
  CHECK(vzero::cli::cmd_fit({"--help"}) == 0);
  CHECK(g_out.find(
            "[--model "
            "mm|substrate-inhibition|hill|competitive|uncompetitive|mixed|4pl|morrison|essential-activation|all]") !=
        std::string::npos);
  CHECK(g_out.find("\n  essential-activation  v = Vmax*S/(Km*(1 + Ka/I) + S)              (needs --inhibitor)\n") !=
        std::string::npos);
  CHECK_THROWS_WITH_AS(vzero::cli::cmd_fit({"t.csv", "--x", "s", "--model", "quadratic"}),
                       "--model quadratic: unknown model; choose mm, substrate-inhibition, hill, competitive, "
                       "uncompetitive, mixed, 4pl, morrison, essential-activation or all",
                       vzero::UsageError);

  vzero::test::TempDir dir;
  vzero::test::spit(dir / "activation.csv", activation_table());
  g_out.clear();
  CHECK(vzero::cli::cmd_fit({dir / "activation.csv", "--x", "substrate_mM", "--inhibitor", "activator_uM", "--model",
                             "essential-activation", "-o", dir / "fit.csv", "--json", dir / "fit.json"}) == 0);
  CHECK(g_out.find("all rows | essential-activation: v = Vmax*S/(Km*(1 + Ka/I) + S)") != std::string::npos);
  const vzero::Table fit = vzero::read_table(dir / "fit.csv");
  const int param = fit.require_column("parameter", ""), unit = fit.require_column("unit", "");
  const int est = fit.require_column("estimate", "");
  REQUIRE(fit.rows.size() == 3);
  const std::vector<std::string> units = {"uM/min", "mM", "uM"};
  for (std::size_t k = 0; k < 3; ++k) {
    CHECK(fit.rows[k][static_cast<std::size_t>(param)] == m.parameters[k].name);
    CHECK(fit.rows[k][static_cast<std::size_t>(unit)] == units[k]);
    CHECK_REL(*fit.number(k, est), truth[k], 1e-6);
  }
  const auto j = nlohmann::json::parse(vzero::test::slurp(dir / "fit.json"));
  CHECK(j["fits"][0]["model"] == "essential-activation");
  CHECK(j["fits"][0]["parameter_names"] == nlohmann::json::array({"Vmax", "Km", "Ka"}));

  // --model all with an inhibitor column takes every registered model, the added one last.
  CHECK(vzero::cli::cmd_fit({dir / "activation.csv", "--x", "substrate_mM", "--inhibitor", "activator_uM", "--model",
                             "all", "--no-profile", "-q", "--json", dir / "all.json"}) == 0);
  const auto all = nlohmann::json::parse(vzero::test::slurp(dir / "all.json"));
  CHECK(all["options"]["models"] == nlohmann::json::array({"mm", "substrate-inhibition", "hill", "competitive",
                                                           "uncompetitive", "mixed", "essential-activation"}));
}
