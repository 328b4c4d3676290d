// vzero progress's JSON document and HTML report, on the benchmark's simulated plate (known
// truth: tests/sim; the enzyme keeps its activity, Vmax ∝ the column pair's enzyme level).
#include <fmt/format.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>

#include "bench/bench_files.hpp"
#include "sim/plate_sim.hpp"
#include "test_support.hpp"
#include "vzero/table.hpp"

namespace {

std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
  return n;
}

const nlohmann::json* parameter(const nlohmann::json& fit, const std::string& name) {
  for (const auto& p : fit["parameters"])
    if (p["name"] == name) return &p;
  return nullptr;
}

}  // namespace

TEST_CASE("vzero progress --enzyme-levels --json --report on a simulated plate") {
  using vzero::test::run_vzero;
  vzero::test::TempDir dir;
  const vzero::sim::PlateSpec spec = vzero::bench::spec_for(96, 30);
  const vzero::sim::Plate plate = vzero::bench::write_plate96(dir.path.string());
  const auto rates = run_vzero(
      "rates plate.csv --layout map.csv --epsilon 8000 --path-cm 1 --signal-ceiling 2.5 "
      "-o rates.csv --traces traces.csv -q",
      dir.path.string());
  REQUIRE_MESSAGE(rates.status == 0, rates.describe());
  const std::string cmd =
      "progress rates.csv --traces traces.csv --x substrate --enzyme-levels enzyme --no-profile -q --json {} "
      "--report {} --stability st.csv";
  const auto r = run_vzero(fmt::format(fmt::runtime(cmd), "p.json", "p.html"), dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const nlohmann::json j = nlohmann::json::parse(slurp(dir / "p.json"));
  CHECK(j["tool"] == "vzero progress");
  CHECK(j["enzyme_use"] == "vmax-per-level");
  REQUIRE(j["fits"].size() == 1);
  const auto& g = j["fits"][0];
  const auto& mm = g["progress"][0];
  REQUIRE(mm["ok"] == true);
  // Truth (tests/sim): Km = 100 µM (spec_for), Vmax = level × the top level's Vmax.
  CHECK(std::fabs(mm["parameters"][0]["estimate"].get<double>() - 100) < 2);
  const double vmax_top = plate.truth.front().vmax_uM_s * 60;
  int levels = 0;
  for (double level : spec.enzyme_levels) {
    const auto* p = parameter(mm, fmt::format("Vmax[E={:g}]", level));
    if (!p) continue;  // a level whose every well was left out
    ++levels;
    CAPTURE(level);
    CHECK(std::fabs((*p)["estimate"].get<double>() / (level * vmax_top) - 1) < 0.03);
    CHECK((*p)["unit"] == "uM/min");
  }
  CHECK(levels >= 4);
  CHECK(g["initial_rates"]["ok"] == false);  // one Vmax per level is not an initial-rate model
  CHECK(mm["offsets"].size() == g["wells"].size());
  // Selwyn's test: one per S0 of the series, none flagged (the simulated enzyme is stable).
  CHECK(g["stability"].size() == spec.s0_over_km.size());
  for (const auto& s : g["stability"]) {
    CHECK(s["unstable"] == false);
    CHECK(s["tested"] == true);  // the level far above the lowest left out, the rest tested
  }
  // --stability: the same tests as a table, row by row.
  const vzero::Table st = vzero::read_table(dir / "st.csv");
  REQUIRE(st.rows.size() == g["stability"].size());
  for (std::size_t k = 0; k < st.rows.size(); ++k) {
    const auto& s = g["stability"][k];
    CHECK(*st.number(k, st.column("s0")) == s["s0"].get<double>());
    CHECK(*st.number(k, st.column("f")) == s["f"].get<double>());
    CHECK(*st.number(k, st.column("p_value")) == s["p_value"].get<double>());
    CHECK(st.rows[k][static_cast<std::size_t>(st.column("flag"))].empty());
    CHECK(st.rows[k][static_cast<std::size_t>(st.column("tested"))] == "1");
  }
  // The report: one panel per fitted well, each with the fitted curve; offline; deterministic.
  const std::string html = slurp(dir / "p.html");
  CHECK(count(html, "<figure class=\"chart-small\">") == g["wells"].size());
  CHECK(count(html, "class=\"fit-curve-well\"") == g["wells"].size());
  CHECK(html.find("Selwyn") != std::string::npos);
  CHECK(html.find("http") == std::string::npos);
  CHECK(html.find("<script") == std::string::npos);
  const auto again = run_vzero(fmt::format(fmt::runtime(cmd), "q.json", "q.html"), dir.path.string());
  REQUIRE(again.status == 0);
  CHECK(slurp(dir / "q.html") == html);
  CHECK(slurp(dir / "q.json") == slurp(dir / "p.json"));
}

TEST_CASE("vzero progress: --enzyme and --enzyme-levels exclude each other") {
  using vzero::test::run_vzero;
  vzero::test::TempDir dir;
  const auto r = run_vzero("progress r.csv --traces t.csv --x s --enzyme e --enzyme-levels e", dir.path.string());
  CHECK(r.status == 2);
  CHECK(r.err.find("exclude each other") != std::string::npos);
}

TEST_CASE("vzero progress --kcat-per-min: kcat in 1/min is 60 × kcat in 1/s") {
  using vzero::test::run_vzero;
  vzero::test::TempDir dir;
  const vzero::sim::Plate plate = vzero::bench::write_plate96(dir.path.string(), "map0.csv");
  // The enzyme column with its unit (nM), so that kcat reduces to a time unit.
  std::string map = slurp(dir.path / "map0.csv");
  map.replace(map.find(",enzyme\n"), 8, ",enzyme_nM\n");
  vzero::test::spit(dir / "map.csv", map);
  REQUIRE(run_vzero("rates plate.csv --layout map.csv --epsilon 8000 --path-cm 1 -o rates.csv --traces traces.csv -q",
                    dir.path.string()).status == 0);
  const std::string cmd = "progress rates.csv --traces traces.csv --x substrate --enzyme enzyme_nM --no-profile -q -o ";
  REQUIRE(run_vzero(cmd + "s.csv", dir.path.string()).status == 0);
  REQUIRE(run_vzero(cmd + "m.csv --kcat-per-min", dir.path.string()).status == 0);
  const vzero::Table s = vzero::read_table(dir / "s.csv"), m = vzero::read_table(dir / "m.csv");
  REQUIRE(s.rows.size() == m.rows.size());
  int kcats = 0;
  for (std::size_t k = 0; k < s.rows.size(); ++k) {
    if (s.rows[k][static_cast<std::size_t>(s.column("parameter"))] != "kcat") continue;
    ++kcats;
    CHECK(s.rows[k][static_cast<std::size_t>(s.column("unit"))] == "1/s");
    CHECK(m.rows[k][static_cast<std::size_t>(m.column("unit"))] == "1/min");
    CHECK_REL(*m.number(k, m.column("estimate")), 60 * *s.number(k, s.column("estimate")), 1e-12);
    CHECK_REL(*m.number(k, m.column("se")), 60 * *s.number(k, s.column("se")), 1e-12);
  }
  CHECK(kcats == 2);  // the progress fit's and the initial rates'
}
