// vzero fit --enzymeml: the fitted rate law added to the rates run's EnzymeML document.
// Check values: fit.csv of the same fit (estimates and SEs read back as text: shortest
// round-trip numbers, so equality is exact); the kcat unit: (µM/min)/nM reduced by vzero fit
// to 1/s, and kcat/Km to 1/s per M = M⁻¹·s⁻¹ = L·mol⁻¹·s⁻¹ (SI, by hand).
#include <cstdlib>
#include <string>

#include "enzymeml_rules.hpp"
#include "test_support.hpp"
#include "vzero/table.hpp"

using namespace vzero::test;

namespace {

std::string demo(const std::string& f) { return "'" + source("demo-data/" + f) + "'"; }

}  // namespace

TEST_CASE("the demo fit's estimates and standard errors become the document's rate law and parameters") {
  TempDir d;
  auto r = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " --method " +
                     demo("esterase_method.toml") + " -o '" + (d / "rates.csv") + "' --enzymeml '" + (d / "run.json") +
                     "' --quiet");
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  r = run_vzero("fit '" + (d / "rates.csv") +
                "' --x substrate --inhibitor inhibitor_uM --model competitive --group enzyme_nM --enzyme enzyme_nM -o '" +
                (d / "fit.csv") + "' --enzymeml-from '" + (d / "run.json") + "' --enzymeml '" + (d / "fitted.json") +
                "' --quiet");
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const json doc = json::parse(slurp(d / "fitted.json"));
  CHECK_MESSAGE(standard_problems(doc).empty(), joined(standard_problems(doc)));
  // equations: one rateLaw, the reaction's kinetic law (the demo's 5 nM group is fitted; its
  // 50 nM group is not: fit.csv's rows without an estimate).
  REQUIRE(doc["equations"].size() == 1);
  CHECK(doc["equations"][0]["equation_type"] == "rateLaw");
  CHECK(doc["reactions"][0]["kinetic_law"] == doc["equations"][0]);
  CHECK(doc["equations"][0]["species_id"] == "p1");
  // Every row of fit.csv is a parameter with the same estimate and SE.
  const vzero::Table fit = vzero::read_table(d / "fit.csv");
  const auto col = [&](const char* n) { return static_cast<std::size_t>(fit.column(n)); };
  int matched = 0, estimated = 0;
  for (const auto& row : fit.rows) {
    if (row[col("estimate")].empty()) continue;
    ++estimated;
    for (const auto& p : doc["parameters"])
      if (p["symbol"] == row[col("parameter")] && p.contains("stderr") && p["id"].get<std::string>().rfind("v0_", 0) != 0) {
        CHECK(p["value"].get<double>() == std::strtod(row[col("estimate")].c_str(), nullptr));
        CHECK(p["stderr"].get<double>() == std::strtod(row[col("se")].c_str(), nullptr));
        CHECK(p["name"] == row[col("parameter")] + " of competitive (enzyme_nM = " + row[col("enzyme_nM")] + ")");
        ++matched;
      }
  }
  CHECK(estimated == 5);  // Vmax, Km, Kic, kcat, kcat/Km of one group
  CHECK(matched == estimated);
  for (const auto& p : doc["parameters"]) {
    if (p["symbol"] == "Km") CHECK(p["unit"]["base_units"][0]["scale"] == -6);  // µM: mole, scale −6
    if (p["symbol"] == "kcat") {
      const json& b = p["unit"]["base_units"];
      REQUIRE(b.size() == 1);
      CHECK(b[0] == json({{"kind", "second"}, {"exponent", -1}, {"multiplier", 1}, {"scale", 0}}));
    }
    if (p["symbol"] == "kcat/Km") {
      const json& b = p["unit"]["base_units"];
      REQUIRE(b.size() == 3);
      CHECK(b[0] == json({{"kind", "mole"}, {"exponent", -1}, {"multiplier", 1}, {"scale", 0}}));
      CHECK(b[1] == json({{"kind", "litre"}, {"exponent", 1}, {"multiplier", 1}, {"scale", 0}}));
      CHECK(b[2] == json({{"kind", "second"}, {"exponent", -1}, {"multiplier", 1}, {"scale", 0}}));
    }
  }
  // The rates run's time courses and v0 parameters are kept as they were.
  const json before = json::parse(slurp(d / "run.json"));
  CHECK(doc["measurements"] == before["measurements"]);
}

TEST_CASE("--enzymeml-from must be an EnzymeML document; --enzymeml needs it") {
  TempDir d;
  spit(d / "not.json", "{\"name\": \"x\"}\n");
  REQUIRE(run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " --method " +
                    demo("esterase_method.toml") + " -o '" + (d / "rates.csv") + "' --quiet")
              .status == 0);
  auto r = run_vzero("fit '" + (d / "rates.csv") + "' --x substrate --enzymeml-from '" + (d / "not.json") +
                     "' --enzymeml '" + (d / "out.json") + "' --quiet");
  CHECK(r.status == 1);
  CHECK_MESSAGE(r.err.find("not.json:1:1: expected the EnzymeML 2 document vzero rates --enzymeml wrote") !=
                    std::string::npos,
                r.describe());
  CHECK(!std::filesystem::exists(d / "out.json"));
  r = run_vzero("fit '" + (d / "rates.csv") + "' --x substrate --enzymeml '" + (d / "out.json") + "' --quiet");
  CHECK(r.status == 2);
  CHECK(r.err.find("--enzymeml OUT and --enzymeml-from DOC go together") != std::string::npos);
}
