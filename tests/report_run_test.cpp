// One-call reports from the command line: `vzero report RUN_FOLDER` (or its rates.csv)
// finds the run's files by the names datapackage.json records and the fits whose source
// is one of its tables; --fit takes the fit's JSON or its CSV table; `vzero fit --report`
// writes the run's report with the fit. The demo data are invented (demo-data/README.md).
#include <nlohmann/json.hpp>

#include <algorithm>
#include <filesystem>
#include <string>

#include "test_support.hpp"
#include "vzero/table.hpp"
#include "xml_check.hpp"

using namespace vzero;
using vzero::test::XmlNode;

namespace {

// The README demo into dir/run: rates with traces and summary, a competitive-inhibition
// fit of rates.csv and a Michaelis–Menten fit of summary.csv beside them.
void run_demo(const test::TempDir& dir) {
  std::filesystem::create_directories(dir / "run");
  const std::string d = test::source("demo-data");
  auto r =
      test::run_vzero("rates '" + d + "/hydrolase_wide.csv' --layout '" + d + "/hydrolase_map.csv' --method '" + d +
                          "/esterase_method.toml' -o run/rates.csv --summary run/summary.csv --traces "
                          "run/traces.csv -q",
                      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  r = test::run_vzero(
      "fit run/rates.csv --x substrate --inhibitor inhibitor_uM --model competitive --group enzyme_nM "
      "-o run/fit.csv --json run/fit.json -q",
      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  r = test::run_vzero("fit run/summary.csv --x substrate --group inhibitor_uM --json run/fit_mm.json -q",
                      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
}

std::size_t fits_in(const std::string& json_path) {
  return nlohmann::json::parse(test::slurp(json_path))["fits"].size();
}

std::vector<const XmlNode*> with_class(const XmlNode& root, const std::string& name, const std::string& cls) {
  return root.all([&](const XmlNode& n) { return n.name == name && n.has_class(cls); });
}

}  // namespace

TEST_CASE("vzero report RUN_FOLDER: the tables datapackage.json names and the fits of them") {
  test::TempDir dir;
  run_demo(dir);
  std::filesystem::create_directories(dir / "run/sub");  // a folder in the run folder is passed over
  auto r = test::run_vzero("report run", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  CHECK(r.out.rfind("wrote run/report.html (", 0) == 0);
  const std::string html = test::slurp(dir / "run/report.html");
  auto doc = test::parse_xml(html);
  REQUIRE_MESSAGE(doc.error == "", doc.error);
  // Every well has a panel with a trace, the summary is there, and both fits (one article
  // per group of each) in file-name order: fit.json, then fit_mm.json.
  CHECK(with_class(*doc.root, "g", "well").size() == 96);
  CHECK(with_class(*doc.root, "path", "trace").size() == 96);
  CHECK(with_class(*doc.root, "table", "summary").size() == 1);
  const std::size_t articles = fits_in(dir / "run/fit.json") + fits_in(dir / "run/fit_mm.json");
  CHECK(with_class(*doc.root, "article", "fit").size() == articles);
  CHECK(html.find("read from run/fit.json") < html.find("read from run/fit_mm.json"));
  // The rates.csv path finds the same files; the explicit options give the same page.
  r = test::run_vzero("report run/rates.csv -q -o by_rates.html", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  CHECK(test::slurp(dir / "by_rates.html") == html);
  r = test::run_vzero(
      "report --rates run/rates.csv --traces run/traces.csv --summary run/summary.csv --package "
      "run/datapackage.json --fit run/fit.json --fit run/fit_mm.json -q -o explicit.html",
      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  CHECK(test::slurp(dir / "explicit.html") == html);
  // --y-scale well: every panel on its own labelled scale; a mistyped value is a usage error.
  r = test::run_vzero("report run --y-scale well -q -o per_well.html", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  auto per_well = test::parse_xml(test::slurp(dir / "per_well.html"));
  REQUIRE(per_well.error == "");
  CHECK(with_class(*per_well.root, "g", "own-scale").size() == 96);
  CHECK(with_class(*doc.root, "g", "own-scale").size() < 96);
  r = test::run_vzero("report run --y-scale plat -o x.html", dir.path.string());
  CHECK(r.status == 2);
  CHECK(r.err.rfind("vzero report: --y-scale is \"plat\"; expected plate or well", 0) == 0);
  // A folder without datapackage.json is an error that says what to give.
  r = test::run_vzero("report run/sub", dir.path.string());
  CHECK(r.status == 1);
  CHECK(r.err.find("expected datapackage.json beside the run's tables in \"run/sub\"; found none") !=
        std::string::npos);
}

TEST_CASE("--fit takes the fit table too: the same estimates, no band, and it says why") {
  test::TempDir dir;
  run_demo(dir);
  auto r = test::run_vzero("report run --fit run/fit.csv -q -o from_csv.html", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  r = test::run_vzero("report run --fit run/fit.json -q -o from_json.html", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string csv_html = test::slurp(dir / "from_csv.html"), json_html = test::slurp(dir / "from_json.html");
  auto from_csv = test::parse_xml(csv_html), from_json = test::parse_xml(json_html);
  REQUIRE(from_csv.error == "");
  REQUIRE(from_json.error == "");
  // The parameter tables hold the same text: fit.csv and fit.json carry the same numbers.
  auto pc = with_class(*from_csv.root, "table", "params"), pj = with_class(*from_json.root, "table", "params");
  REQUIRE(pc.size() == 1);
  REQUIRE(pj.size() == 1);
  CHECK(pc[0]->all_text() == pj[0]->all_text());
  // One article per group in fit.csv: enzyme 5 nM fitted, the 50 nM group not.
  const Table fit = read_table(dir / "run/fit.csv");
  std::vector<std::string> groups;
  for (const auto& row : fit.rows)
    if (std::find(groups.begin(), groups.end(), row[0]) == groups.end()) groups.push_back(row[0]);
  CHECK(with_class(*from_csv.root, "article", "fit").size() == groups.size());
  CHECK(with_class(*from_csv.root, "polygon", "ci-band").empty());
  CHECK(with_class(*from_json.root, "polygon", "ci-band").size() == 2);
  CHECK(csv_html.find("It records neither the fitted table nor the covariance") != std::string::npos);
  // A fit table vzero did not write is an error naming the column it lacks.
  test::spit(dir / "other.csv", "a,b\n1,2\n");
  r = test::run_vzero("report run --fit other.csv -o x.html", dir.path.string());
  CHECK(r.status == 1);
  CHECK(r.err.rfind("other.csv:1: expected a column named \"model\"", 0) == 0);
}

TEST_CASE("vzero fit --report: the run's page with this fit and its points") {
  test::TempDir dir;
  run_demo(dir);
  auto r = test::run_vzero(
      "fit run/rates.csv --x substrate --inhibitor inhibitor_uM --model competitive --group enzyme_nM -q "
      "--report run/with_fit.html",
      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string html = test::slurp(dir / "run/with_fit.html");
  auto doc = test::parse_xml(html);
  REQUIRE_MESSAGE(doc.error == "", doc.error);
  CHECK(with_class(*doc.root, "g", "well").size() == 96);
  auto fits = with_class(*doc.root, "article", "fit");
  REQUIRE(fits.size() == fits_in(dir / "run/fit.json"));
  // Its points come from the fit itself: n of the fitted group, two inhibitor levels.
  const auto j = nlohmann::json::parse(test::slurp(dir / "run/fit.json"));
  const auto n = j["fits"][0]["n"].template get<std::size_t>();
  auto pts =
      fits[0]->all([](const XmlNode& x) { return x.name == "path" && x.has_class("pt") && !x.has_class("left-out"); });
  REQUIRE(pts.size() == 6);  // two levels in each of three charts
  std::size_t marks = 0;
  for (std::size_t k = 0; k < 2; ++k) {
    const std::string d = pts[k]->attr("d");
    marks += static_cast<std::size_t>(std::count(d.begin(), d.end(), 'M'));
  }
  CHECK(marks == n);
  CHECK(html.find("read from the fit of this call") != std::string::npos);
  // A table outside a run folder: the report cannot be drawn, and says so.
  test::spit(dir / "loose.csv", test::slurp(dir / "run/rates.csv"));
  r = test::run_vzero("fit loose.csv --x substrate -q --report loose.html", dir.path.string());
  CHECK(r.status == 1);
  CHECK(r.err.find("expected datapackage.json beside the run's tables") != std::string::npos);
}
