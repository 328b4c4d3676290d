// A half-published output set: datapackage.json records the sha256 of each table it
// describes (the Data Package `hash`), so a table left by another run beside it — what a
// crash between the renames of one `vzero rates` call leaves — is refused by `vzero report`
// and pointed out by the next `vzero rates`. The crash is simulated by putting an older
// rates.csv in place. Check values: sha256 as `sha256sum` prints it (coreutils).
#include <cstdlib>
#include <string>

#include "core/files.hpp"
#include "test_support.hpp"

using namespace vzero::test;

namespace {

std::string demo(const std::string& f) { return "'" + source("demo-data/" + f) + "'"; }

std::string rates_into(const TempDir& d, const std::string& folder, const std::string& extra, bool quiet = true) {
  return "rates " + demo("hydrolase_wide.csv") + " --layout " + demo("hydrolase_map.csv") + " --method " +
         demo("esterase_method.toml") + " -o '" + (d / folder) + "/rates.csv' --traces '" + (d / folder) +
         "/traces.csv' --summary '" + (d / folder) + "/summary.csv' " + (quiet ? "--quiet " : "") + extra;
}

}  // namespace

TEST_CASE("datapackage.json records the sha256 of every table it describes") {
  TempDir d;
  std::filesystem::create_directories(d / "run");
  auto r = run_vzero(rates_into(d, "run", ""));
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string pkg = slurp(d / "run/datapackage.json");
  for (const char* table : {"rates.csv", "traces.csv", "summary.csv"}) {
    const std::string hex = vzero::detail::sha256_hex(slurp(d / (std::string("run/") + table)));
    CHECK_MESSAGE(pkg.find("\"hash\": \"sha256:" + hex + "\"") != std::string::npos, table);
  }
  auto rep = run_vzero("report '" + (d / "run") + "' -q");
  CHECK_MESSAGE(rep.status == 0, rep.describe());
}

TEST_CASE("a table from another run beside datapackage.json is refused by report and named by rates") {
  TempDir d;
  std::filesystem::create_directories(d / "run");
  std::filesystem::create_directories(d / "older");
  REQUIRE(run_vzero(rates_into(d, "older", "--window leading")).status == 0);
  REQUIRE(run_vzero(rates_into(d, "run", "")).status == 0);
  // The crash: the new datapackage.json is in place, rates.csv is still the older run's.
  std::filesystem::copy_file(d / "older/rates.csv", d / "run/rates.csv",
                             std::filesystem::copy_options::overwrite_existing);
  auto rep = run_vzero("report '" + (d / "run") + "'");
  CHECK(rep.status == 1);
  CHECK_MESSAGE(rep.err.find("rates.csv is not the one datapackage.json describes") != std::string::npos,
                rep.describe());
  CHECK(rep.err.find("interrupted while publishing") != std::string::npos);
  CHECK(rep.err.find("rerun vzero rates") != std::string::npos);
  // A missing table is named too.
  std::filesystem::remove(d / "run/traces.csv");
  rep = run_vzero("report '" + (d / "run") + "'");
  CHECK(rep.status == 1);
  CHECK(rep.err.find("traces.csv is not the one datapackage.json describes (it is missing)") != std::string::npos);
  // The next vzero rates in the folder says what it found, then writes a whole set.
  auto again = run_vzero(rates_into(d, "run", "", false));
  CHECK(again.status == 0);
  CHECK_MESSAGE(again.err.find("warning: an earlier run's outputs here were left half-published") != std::string::npos,
                again.describe());
  CHECK(run_vzero("report '" + (d / "run") + "' -q").status == 0);
}
