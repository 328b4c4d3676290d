// The reader's inferences reach the user: `vzero inspect` shows them, `vzero rates` notes a
// time unit taken as seconds on the console and records every inference per export in
// datapackage.json (vzero.inputs[i].read); --time-unit states the unit. Files are written
// by the test (invented); check values are worked from them.
#include <fmt/format.h>

#include <nlohmann/json.hpp>

#include "test_support.hpp"

using vzero::test::run_vzero;

namespace {

// A 96-well wide export with a bare `Time` header (or `header`), reads `step` apart, and its
// plate map.
void write_plate(const vzero::test::TempDir& dir, double step, const std::string& header = "Time") {
  std::string s = header;
  std::string map = "well,role\n";
  for (int w = 0; w < 96; ++w) {
    const std::string name = fmt::format("{}{}", static_cast<char>('A' + w / 12), w % 12 + 1);
    s += "," + name;
    map += name + (w < 8 ? ",blank\n" : ",sample\n");
  }
  s += "\n";
  for (int r = 0; r < 11; ++r) {
    s += fmt::format("{:g}", r * step);
    for (int w = 0; w < 96; ++w) s += fmt::format(",{:.4f}", 0.05 + (w < 8 ? 0.0 : 0.002 * r));
    s += "\n";
  }
  vzero::test::spit(dir / "plate.csv", s);
  vzero::test::spit(dir / "map.csv", map);
}

// The `read` record of the export in a datapackage.json.
nlohmann::json export_read(const std::string& package) {
  const auto j = nlohmann::json::parse(package);
  for (const auto& in : j["vzero"]["inputs"])
    if (in["kind"] == "export") return in["read"];
  return {};
}

}  // namespace

TEST_CASE("seconds inferred: a note on the console, a line in inspect, a record in datapackage.json") {
  vzero::test::TempDir dir;
  write_plate(dir, 30);  // 30 s steps for 96 wells: plausible as seconds (>= 1.92 s)
  const auto r = run_vzero("rates plate.csv --layout map.csv -o rates.csv", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  CHECK(r.err.find("note: plate.csv: read times taken as seconds: no unit in the header or profile") !=
        std::string::npos);
  const auto read = export_read(vzero::test::slurp(dir / "datapackage.json"));
  CHECK(read["time_unit"]["value"] == "s");
  CHECK(read["delimiter"]["value"] == "',' (comma)");
  CHECK(read["plate"]["value"] == "96 wells (8 × 12)");
  CHECK(read["channels"][0]["value"] == "signal");
  CHECK(read["shape"]["value"] == "wide");
  const auto i = run_vzero("inspect plate.csv", dir.path.string());
  CHECK(i.out.find("  time_unit       s  (no unit in the header or profile") != std::string::npos);
}

TEST_CASE("minutes not stated: rates stops with the fix (exit 1); --time-unit min reads them") {
  vzero::test::TempDir dir;
  write_plate(dir, 0.5);  // 0.5 apart: below 1.92 s as seconds; minutes in truth
  const auto r = run_vzero("rates plate.csv --layout map.csv -o rates.csv", dir.path.string());
  CHECK(r.status == 1);
  CHECK(r.err.find("plate.csv:1:1: expected read times whose unit is stated") == 0);
  CHECK(r.err.find("--time-unit min") != std::string::npos);
  const auto ok = run_vzero("rates plate.csv --layout map.csv -o rates.csv --time-unit min", dir.path.string());
  REQUIRE_MESSAGE(ok.status == 0, ok.describe());
  CHECK(export_read(vzero::test::slurp(dir / "datapackage.json"))["time_unit"]["basis"] == "--time-unit min");
  const auto i = run_vzero("inspect plate.csv --time-unit min", dir.path.string());
  CHECK(i.out.find("reads   11, from 0 s to 300 s") != std::string::npos);  // 5 min = 300 s
}

TEST_CASE("seconds stated at steps no plate reader makes: read as stated, with a warning") {
  // "Time [s]" over reads 0.5 apart for 96 wells (under the 1.92 s a reader needs, above): the
  // header stands, so the rates are per the stated seconds, but the console, inspect and
  // datapackage.json say that minutes would make them 60 × too fast. 30 s steps say nothing.
  vzero::test::TempDir dir;
  write_plate(dir, 0.5, "Time [s]");
  const auto r = run_vzero("rates plate.csv --layout map.csv -o rates.csv", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string said = "plate.csv: times read as seconds, as the time header \"Time [s]\" states, with a median "
                           "step of 0.5 between reads of 96 wells";
  CHECK(r.err.find("warning: " + said) != std::string::npos);
  CHECK(r.err.find("60 × too fast") != std::string::npos);
  const auto j = nlohmann::json::parse(vzero::test::slurp(dir / "datapackage.json"));
  CHECK(j["vzero"]["warnings"].dump().find("times read as seconds, as the time header") != std::string::npos);
  const auto i = run_vzero("inspect plate.csv", dir.path.string());
  CHECK(i.out.find("  warning: times read as seconds") != std::string::npos);
  vzero::test::TempDir calm;
  write_plate(calm, 30, "Time [s]");
  const auto c = run_vzero("rates plate.csv --layout map.csv -o rates.csv", calm.path.string());
  REQUIRE_MESSAGE(c.status == 0, c.describe());
  CHECK(c.err.find("warning") == std::string::npos);
}
