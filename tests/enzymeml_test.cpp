// vzero rates --enzymeml: the document against the rules of the EnzymeML 2.0 standard
// (/work/shared/standards/enzymeml-v2.md, the field list of the published specification;
// each check names its section), and its time courses against traces.csv of the same run.
// Check values: the demo run's own traces.csv and rates.csv (read back as text: the
// shortest round-trip number text reads back to the same double, so "exactly" is bitwise);
// pH, temperature and enzyme values are the ones given on the command line or in the map.
#include <nlohmann/json.hpp>

#include <cstdlib>
#include <map>
#include <sstream>
#include <set>
#include <string>
#include <vector>

#include "enzymeml_rules.hpp"
#include "test_support.hpp"
#include "vzero/table.hpp"

using namespace vzero::test;
using nlohmann::json;

namespace {

std::string demo(const std::string& f) { return "'" + source("demo-data/" + f) + "'"; }

std::string demo_run(const TempDir& d, const std::string& extra) {
  return "rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " --method " +
         demo("esterase_method.toml") + " -o '" + (d / "rates.csv") + "' --traces '" + (d / "traces.csv") +
         "' --enzymeml '" + (d / "run.json") + "' --quiet " + extra;
}

}  // namespace

TEST_CASE("the demo run's EnzymeML document keeps the standard's rules") {
  TempDir d;
  auto r = run_vzero(demo_run(d, "--well-volume-ul 200 --assay-ph 7.5 --assay-temperature-c 25 --enzyme 'EstD (invented)' "
                                 "--assay-buffer '50 mM HEPES' --enzymeml-creator Ada,Example,ada@example.org"));
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const json doc = json::parse(slurp(d / "run.json"));
  CHECK_MESSAGE(standard_problems(doc).empty(), joined(standard_problems(doc)));
  CHECK(doc["version"] == "2.0");  // Root object: version "2.0"
  REQUIRE(doc["creators"].size() == 1);
  CHECK(doc["creators"][0]["mail"] == "ada@example.org");
  // One vessel and one measurement per sample well (counted from rates.csv's role column),
  // the volume as given.
  const vzero::Table rates = vzero::read_table(d / "rates.csv");
  int samples = 0;
  for (const auto& row : rates.rows) samples += row[static_cast<std::size_t>(rates.column("role"))] == "sample";
  CHECK(samples > 0);
  CHECK(doc["vessels"].size() == static_cast<std::size_t>(samples));
  CHECK(doc["measurements"].size() == static_cast<std::size_t>(samples));
  CHECK(doc["vessels"][0]["volume"] == 200);
  // UnitDefinition: µL = litre with scale −6; µM = mole (scale −6)·litre⁻¹; per minute =
  // second with multiplier 60, exponent −1 (the standard file's own examples).
  CHECK(doc["vessels"][0]["unit"]["base_units"][0] == json({{"kind", "litre"}, {"exponent", 1}, {"multiplier", 1}, {"scale", -6}}));
  const json& m = doc["measurements"][0];
  CHECK(m["ph"] == 7.5);
  CHECK(m["temperature"] == 25);
  CHECK(m["temperature_unit"]["base_units"][0]["kind"] == "celsius");
  bool conc = false;
  for (const auto& s : m["species_data"])
    if (s.value("data_type", "") == "concentration" && s.contains("data")) {
      conc = true;
      CHECK(s["data_unit"]["base_units"][0] == json({{"kind", "mole"}, {"exponent", 1}, {"multiplier", 1}, {"scale", -6}}));
      CHECK(s["data_unit"]["base_units"][1]["kind"] == "litre");
      CHECK(s["data_unit"]["base_units"][1]["exponent"] == -1);
    }
  CHECK(conc);
  REQUIRE(!doc["parameters"].empty());
  const json& per_min = doc["parameters"][0]["unit"]["base_units"][2];
  CHECK(per_min == json({{"kind", "second"}, {"exponent", -1}, {"multiplier", 60}, {"scale", 0}}));
  CHECK(doc["proteins"][0]["name"] == "EstD (invented)");
}

TEST_CASE("the rules check finds each kind of break") {
  // The check above must be able to fail: each edit breaks one rule of the standard file.
  TempDir d;
  REQUIRE(run_vzero(demo_run(d, "--well-volume-ul 200")).status == 0);
  const json doc = json::parse(slurp(d / "run.json"));
  REQUIRE(standard_problems(doc).empty());
  json a = doc;
  a.erase("version");
  CHECK(joined(standard_problems(a)).find("Root object: `version` is required") != std::string::npos);
  json b = doc;
  b["measurements"][0]["species_data"].back()["initial"] = -1.0;
  CHECK(joined(standard_problems(b)).find("`initial` must equal the first value") != std::string::npos);
  json c = doc;
  c["measurements"][0]["species_data"].back()["data_type"] = "signal";
  CHECK(joined(standard_problems(c)).find("is not one of the standard's") != std::string::npos);
  json e = doc;
  e["vessels"][0].erase("volume");
  CHECK(joined(standard_problems(e)).find("vessels: `volume` is required") != std::string::npos);
}

TEST_CASE("the time courses are traces.csv's concentration and raw columns, read by read") {
  TempDir d;
  REQUIRE(run_vzero(demo_run(d, "")).status == 0);
  const json doc = json::parse(slurp(d / "run.json"));
  const vzero::Table traces = vzero::read_table(d / "traces.csv");
  const vzero::Table rates = vzero::read_table(d / "rates.csv");
  std::set<std::string> samples;
  std::map<std::string, std::string> v0_text;  // unflagged sample wells' v0 as rates.csv writes it
  for (const auto& row : rates.rows)
    if (row[static_cast<std::size_t>(rates.column("role"))] == "sample") {
      const std::string well = row[static_cast<std::size_t>(rates.column("well"))];
      samples.insert(well);
      if (row[static_cast<std::size_t>(rates.column("flags"))].empty())
        v0_text[well] = row[static_cast<std::size_t>(rates.column("v0"))];
    }
  // Per sample well: (time, concentration, raw) of each ok read, in file order.
  std::map<std::string, std::vector<std::vector<double>>> expected;
  auto cell = [&](const std::vector<std::string>& row, const char* name) {
    return row[static_cast<std::size_t>(traces.column(name))];
  };
  for (const auto& row : traces.rows) {
    if (!samples.count(cell(row, "well")) || cell(row, "status") != "ok" || cell(row, "concentration").empty()) continue;
    auto& e = expected["m1_" + cell(row, "well")];
    if (e.empty()) e.resize(3);
    e[0].push_back(std::strtod(cell(row, "time_s").c_str(), nullptr));
    e[1].push_back(std::strtod(cell(row, "concentration").c_str(), nullptr));
    e[2].push_back(std::strtod(cell(row, "raw").c_str(), nullptr));
  }
  REQUIRE(expected.size() == samples.size());
  std::size_t checked = 0;
  for (const auto& m : doc["measurements"]) {
    const auto& e = expected.at(m["id"].get<std::string>());
    for (const auto& s : m["species_data"]) {
      if (!s.contains("data")) continue;
      const bool conc = s["data_type"] == "concentration";
      CHECK(s["species_id"] == "p1");  // the demo's signal rises: the product
      CHECK(s["time"].get<std::vector<double>>() == e[0]);
      CHECK(s["data"].get<std::vector<double>>() == e[conc ? 1 : 2]);  // bitwise equal
      ++checked;
    }
  }
  CHECK(checked == 2 * samples.size());  // concentration and absorbance per well
  // Each unflagged well's v0 parameter is rates.csv's v0.
  CHECK(doc["parameters"].size() == v0_text.size());
  for (const auto& p : doc["parameters"]) {
    const std::string well = p["id"].get<std::string>().substr(std::string("v0_m1_").size());
    CHECK(p["value"].get<double>() == std::strtod(v0_text.at(well).c_str(), nullptr));
    CHECK(p.contains("stderr"));
  }
}

TEST_CASE("the document is the same bytes whatever the thread count") {
  TempDir a, b;
  REQUIRE(run_vzero(demo_run(a, "--threads 1 --well-volume-ul 200")).status == 0);
  REQUIRE(run_vzero(demo_run(b, "--threads 3 --well-volume-ul 200")).status == 0);
  const std::string one = slurp(a / "run.json");
  CHECK(!one.empty());
  CHECK(one == slurp(b / "run.json"));
}

TEST_CASE("an unknown reaction volume is said, never a number") {
  TempDir d;
  REQUIRE(run_vzero(demo_run(d, "")).status == 0);
  const json doc = json::parse(slurp(d / "run.json"));
  CHECK(doc["vessels"].empty());
  const std::string wells = std::to_string(doc["measurements"].size());  // the demo map's sample wells
  CHECK(doc["description"].get<std::string>().find("The reaction volume of " + wells +
                                                   " wells was not given, so they have no vessel (give "
                                                   "--well-volume-ul or a plate-map column volume_ul).") !=
        std::string::npos);
  CHECK(doc["creators"].empty());
  CHECK(doc["description"].get<std::string>().find("No creator was given") != std::string::npos);
  CHECK(!doc["measurements"][0].contains("ph"));  // not given: left out
}

TEST_CASE("plate-map columns give each well its own facts; a bad one stops at its line") {
  TempDir d;
  // The demo map with ph, temperature_c, volume_ul and enzyme columns (values invented).
  std::string map, line;
  std::istringstream in(slurp(source("demo-data/hydrolase_map.csv")));
  int n = 0;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#') continue;
    map += line + (n == 0 ? ",ph,temperature_c,volume_ul,enzyme" : n == 1 ? ",8.1,30,150,EstX" : ",7,30,150,EstX");
    map += "\n";
    ++n;
  }
  spit(d / "map.csv", map);
  auto r = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout '" + (d / "map.csv") + "' --method " +
                     demo("esterase_method.toml") + " -o '" + (d / "rates.csv") + "' --enzymeml '" + (d / "run.json") +
                     "' --assay-ph 6 --quiet");
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const json doc = json::parse(slurp(d / "run.json"));
  CHECK(doc["measurements"][0]["ph"] == 8.1);  // the map's first row wins over --assay-ph 6
  CHECK(doc["measurements"][1]["ph"] == 7);
  CHECK(doc["measurements"][0]["temperature"] == 30);
  CHECK(doc["vessels"][0]["volume"] == 150);
  CHECK(doc["proteins"][0]["name"] == "EstX");
  // The enzyme_nM column of the demo map: nM in its header, the prepared amount 5 nM.
  bool enzyme = false;
  for (const auto& s : doc["measurements"][0]["species_data"])
    if (s["species_id"] == "e1" && s.contains("prepared")) {
      enzyme = true;
      CHECK(s["prepared"] == 5);
      CHECK(s["data_unit"]["base_units"][0]["scale"] == -9);
    }
  CHECK(enzyme);
  // A pH that is not a number: file:line:column, what was expected, what was found.
  spit(d / "bad.csv", map.substr(0, map.find('\n') + 1) + "A1,sample,10,S10,no-inhibitor,0,5,high,30,150,EstX\n" +
                          map.substr(map.find('\n', map.find('\n') + 1) + 1));
  r = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout '" + (d / "bad.csv") + "' --method " +
                demo("esterase_method.toml") + " -o '" + (d / "rates.csv") + "' --enzymeml '" + (d / "run.json") + "'");
  CHECK(r.status == 1);
  CHECK_MESSAGE(r.err.find("bad.csv:2:1: expected a pH from 0 to 14 in column `ph` of well A1, found \"high\"") !=
                    std::string::npos,
                r.describe());
}

TEST_CASE("--enzymeml may not replace an input or another output") {
  TempDir d;
  spit(d / "map.csv", slurp(source("demo-data/hydrolase_map.csv")));
  auto r = run_vzero("rates " + demo("hydrolase_wide.csv") + " --layout '" + (d / "map.csv") + "' --method " +
                     demo("esterase_method.toml") + " -o '" + (d / "rates.csv") + "' --enzymeml '" + (d / "map.csv") + "'");
  CHECK(r.status != 0);
  CHECK_MESSAGE(r.err.find("--enzymeml") != std::string::npos, r.describe());
  CHECK(slurp(d / "map.csv") == slurp(source("demo-data/hydrolase_map.csv")));
}

TEST_CASE("with --direction down the course is the falling species' concentration: traces.csv's with the sign turned") {
  // The demo's signal rises; told down, vzero still writes every read (its rates are then
  // flagged). Check value: traces.csv's concentration, negated (exact in floating point).
  TempDir d;
  REQUIRE(run_vzero(demo_run(d, "--direction down")).status == 0);
  const json doc = json::parse(slurp(d / "run.json"));
  CHECK_MESSAGE(standard_problems(doc).empty(), joined(standard_problems(doc)));
  const vzero::Table traces = vzero::read_table(d / "traces.csv");
  const auto col = [&](const char* n) { return static_cast<std::size_t>(traces.column(n)); };
  std::vector<double> expected;
  for (const auto& row : traces.rows)
    if (row[col("well")] == "A1" && row[col("status")] == "ok" && !row[col("concentration")].empty())
      expected.push_back(-std::strtod(row[col("concentration")].c_str(), nullptr));
  REQUIRE(doc["measurements"][0]["id"] == "m1_A1");
  bool seen = false;
  for (const auto& s : doc["measurements"][0]["species_data"])
    if (s.value("data_type", "") == "concentration" && s.contains("data")) {
      seen = true;
      CHECK(s["species_id"] == "c1");
      CHECK(s["data"].get<std::vector<double>>() == expected);
    }
  CHECK(seen);
  CHECK(doc["reactions"][0]["reactants"][1]["species_id"] == "c1");
  CHECK(doc["reactions"][0]["products"].empty());
}
