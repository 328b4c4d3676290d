// vzero merge: runs over parts of a campaign merge into the outputs one run over every export
// writes (the check value: that one run, made by vzero rates in the same test), and each kind of
// run that cannot merge is refused with the run, the field and the fix (exit 1), writing nothing.
// The GNU parallel example on simulated plates: tests/merge/parallel_test.sh.
#include <doctest/doctest.h>

#include <filesystem>
#include <string>

#include "core/files.hpp"
#include "test_support.hpp"

using namespace vzero::test;
namespace fs = std::filesystem;

namespace {

// The demo exports, plate map and method copied into `dir`, so every path is relative. The
// map leaves well A2's substrate empty: both runs warn of it, and so must the merged set, once.
void demo_inputs(const TempDir& dir) {
  for (const char* f : {"hydrolase_wide.csv", "hydrolase_long.csv", "esterase_method.toml"})
    fs::copy_file(source(std::string("demo-data/") + f), dir / f);
  std::string map = slurp(source("demo-data/hydrolase_map.csv"));
  const std::string a2 = "A2,sample,20,";
  REQUIRE(map.find(a2) != std::string::npos);
  map.replace(map.find(a2), a2.size(), "A2,sample,,");
  spit(dir / "map.csv", map);
}

CommandResult rates(const TempDir& dir, const std::string& files, const std::string& out,
                    const std::string& more = "") {
  fs::create_directories(dir.path / out);
  return run_vzero("rates " + files + " --layout map.csv --method esterase_method.toml -o " + out +
                       "/rates.csv --traces " + out + "/traces.csv --summary " + out + "/summary.csv -q " + more,
                   dir.path.string());
}

// Line number and text of the first line of `file` holding `needle`.
std::pair<int, std::string> line_of(const std::string& file, const std::string& needle) {
  std::istringstream in(slurp(file));
  std::string line;
  for (int n = 1; std::getline(in, line); ++n)
    if (line.find(needle) != std::string::npos) return {n, line};
  return {0, ""};
}

}  // namespace

TEST_CASE("two runs merge into the bytes one run over both exports writes") {
  TempDir dir;
  demo_inputs(dir);
  REQUIRE(rates(dir, "hydrolase_wide.csv hydrolase_long.csv", "one").status == 0);
  REQUIRE(rates(dir, "hydrolase_wide.csv", "p1").status == 0);
  spit(dir / "part2.txt", "hydrolase_long.csv\n");  // a part's file list is not an input of the merged set
  REQUIRE(rates(dir, "--files-from part2.txt", "p2").status == 0);
  auto merged = run_vzero("merge p1 p2 -o all", dir.path.string());
  INFO(merged.describe());
  REQUIRE(merged.status == 0);
  CHECK(merged.out ==
        "merged 2 runs: 2 exports, 192 wells; wrote all/rates.csv, all/traces.csv, all/summary.csv, "
        "all/datapackage.json\n");
  for (const char* f : {"rates.csv", "traces.csv", "summary.csv", "datapackage.json"}) {
    INFO(f);
    CHECK(slurp(dir / (std::string("one/") + f)) == slurp(dir / (std::string("all/") + f)));
  }
  // The one run warns of A2 once (one well name over both exports); each part warned of it too.
  const std::string warning = "1 sample well (first A2) has no substrate concentration in map.csv";
  CHECK(slurp(dir / "one/datapackage.json").find(warning) != std::string::npos);
  CHECK(slurp(dir / "p2/datapackage.json").find(warning) != std::string::npos);
  // The merged set is a whole run for the next step: the report reads it.
  CHECK(run_vzero("report all -q", dir.path.string()).status == 0);
}

TEST_CASE("runs that are not parts of one run are refused, naming the run and the field") {
  TempDir dir;
  demo_inputs(dir);
  REQUIRE(rates(dir, "hydrolase_wide.csv", "p1").status == 0);
  REQUIRE(rates(dir, "hydrolase_long.csv", "p2").status == 0);
  const std::string fix_alike =
      "\n  possible fix: run every part with the same vzero, plate map (--layout), method file and options, from the "
      "same folder, and merge only those\n";
  auto refused = [&](const std::string& runs) {
    auto r = run_vzero("merge " + runs + " -o all", dir.path.string());
    CHECK(r.status == 1);
    CHECK(!fs::exists(dir.path / "all/rates.csv"));  // nothing published
    CHECK(!fs::exists(dir.path / "all/datapackage.json"));
    return r.err;
  };

  SUBCASE("an option differs") {
    REQUIRE(rates(dir, "hydrolase_long.csv", "p3", "--min-points 6").status == 0);
    const auto [n, text] = line_of(dir / "p3/datapackage.json", "\"min-points\":");
    CHECK(refused("p1 p3") == "p3/datapackage.json:" + std::to_string(n) +
                                  ":7: expected option min-points as in p1/datapackage.json (\"5\"), found \"6\": "
                                  "the runs are not parts of one run\n  line " +
                                  std::to_string(n) + ": " + text + fix_alike);
  }
  SUBCASE("the plate map differs (same path, other bytes: its recorded sha256)") {
    spit(dir / "map.csv", slurp(dir / "map.csv") + "# the same wells, other bytes\n");
    REQUIRE(rates(dir, "hydrolase_long.csv", "p3").status == 0);
    const auto [n, text] = line_of(dir / "p3/datapackage.json", "\"plate-map\"");
    const std::string err = refused("p1 p3");
    CHECK(err.rfind("p3/datapackage.json:" + std::to_string(n) +
                        ":17: expected the plate-map input's sha256 as in "
                        "p1/datapackage.json (\"",
                    0) == 0);
    CHECK(err.find("\"), found \"") != std::string::npos);
    CHECK(err.find(fix_alike) != std::string::npos);
  }
  SUBCASE("the same export in two runs") {
    REQUIRE(rates(dir, "hydrolase_wide.csv", "p3").status == 0);
    const auto [n, text] = line_of(dir / "p3/datapackage.json", "\"path\": \"hydrolase_wide.csv\"");
    CHECK(refused("p1 p2 p3") ==
          "p3/datapackage.json:" + std::to_string(n) +
              ":9: expected each export in one run only, found hydrolase_wide.csv in p1/datapackage.json too (same "
              "path): its wells would count twice\n  line " +
              std::to_string(n) + ": " + text +
              "\n  possible fix: give each export to one part only (cut one file list into pieces; see "
              "docs/cluster.md)\n");
  }
  SUBCASE("a run's table is missing or changed since (its recorded hash)") {
    fs::remove(dir.path / "p2/traces.csv");
    CHECK(refused("p1 p2") ==
          "p2/datapackage.json: the run is incomplete or was changed since: p2/traces.csv is not the one "
          "datapackage.json describes (it is missing): a run was interrupted while publishing its outputs, or the "
          "file was changed since\n  possible fix: run that part again (or wait until it has finished), then merge\n");
    spit(dir / "p1/rates.csv", slurp(dir / "p1/rates.csv") + "\n");
    CHECK(refused("p1 p2").find("p1/rates.csv is not the one datapackage.json describes (its sha256 differs from "
                                "the recorded hash)") != std::string::npos);
  }
  SUBCASE("a run's rates.csv that does not follow its exports, hash and all") {
    REQUIRE(rates(dir, "hydrolase_wide.csv hydrolase_long.csv", "p3").status == 0);
    const std::string table = slurp(dir / "p3/rates.csv");
    std::string kept;  // the rows of hydrolase_long.csv dropped, the recorded hash made to match
    for (std::size_t at = 0; at < table.size();) {
      const std::size_t end = table.find('\n', at) + 1;
      if (table.compare(at, 19, "hydrolase_long.csv,") != 0) kept += table.substr(at, end - at);
      at = end;
    }
    REQUIRE(kept.size() < table.size());
    spit(dir / "p3/rates.csv", kept);
    std::string pkg = slurp(dir / "p3/datapackage.json");
    const std::string old_hash = "sha256:" + vzero::detail::sha256_hex(table);
    REQUIRE(pkg.find(old_hash) != std::string::npos);
    pkg.replace(pkg.find(old_hash), old_hash.size(), "sha256:" + vzero::detail::sha256_hex(kept));
    spit(dir / "p3/datapackage.json", pkg);
    CHECK(refused("p3") ==
          "p3/rates.csv: expected rows of hydrolase_long.csv, found none: rates.csv does not follow the exports "
          "p3/datapackage.json lists\n  possible fix: merge the run folder as `vzero rates` wrote it, or run that "
          "part again\n");
  }
  SUBCASE("runs that wrote different tables") {
    fs::create_directories(dir.path / "p3");
    REQUIRE(run_vzero("rates hydrolase_long.csv --layout map.csv --method esterase_method.toml -o p3/rates.csv "
                      "--summary p3/summary.csv -q",
                      dir.path.string())
                .status == 0);
    const auto [n, text] = line_of(dir / "p3/datapackage.json", "\"resources\"");
    CHECK(refused("p1 p3") ==
          "p3/datapackage.json:" + std::to_string(n) +
              ":3: expected table 2 as in p1/datapackage.json (\"traces.csv\"), found \"summary.csv\": "
              "the runs are not parts of one run\n  line " +
              std::to_string(n) + ": " + text + fix_alike);
  }
  SUBCASE("a folder that no vzero rates run wrote into") {
    fs::create_directories(dir.path / "empty");
    const std::string err = refused("p1 empty");
    CHECK(err.rfind("empty/datapackage.json: cannot open", 0) == 0);
  }
  SUBCASE("no output folder is a usage error") {
    auto r = run_vzero("merge p1 p2", dir.path.string());
    CHECK(r.status == 2);
    CHECK(r.err == "vzero merge: -o OUT_FOLDER is required (where the merged set goes)\n  see: vzero merge --help\n");
  }
}
