// The run report, checked by parsing the page it writes: well-formed markup, every well
// present with exactly one panel, each accepted window drawn where rates.csv says, links
// that resolve, no URL of any kind, byte-identical output for the same inputs, and a
// 1536-well plate collapsed into blocks. The demo data and the simulated plate are
// invented (see demo-data/README.md and report_sim.hpp).
#include <fmt/format.h>
#include "vzero/report.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <map>
#include <set>
#include <string>

#include "report_sim.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/table.hpp"
#include "xml_check.hpp"

using namespace vzero;
using vzero::test::XmlNode;

namespace {

std::vector<std::string> split_words(const std::string& flags) {
  std::vector<std::string> out;
  std::size_t p = 0;
  while (p < flags.size()) {
    std::size_t e = flags.find(';', p);
    if (e == std::string::npos) e = flags.size();
    if (e > p) out.push_back(flags.substr(p, e - p));
    p = e + 1;
  }
  return out;
}

// Runs the README demo (rates, then a competitive-inhibition fit) in `dir`.
void run_demo(const test::TempDir& dir, const std::string& extra = "") {
  const std::string d = test::source("demo-data");
  auto r =
      test::run_vzero("rates '" + d + "/hydrolase_wide.csv' --layout '" + d + "/hydrolase_map.csv' --method '" + d +
                          "/esterase_method.toml' -o rates.csv --summary summary.csv --traces traces.csv -q " + extra,
                      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  r = test::run_vzero(
      "fit rates.csv --x substrate --inhibitor inhibitor_uM --model competitive --group enzyme_nM "
      "--json fit.json --diagnostics diag.csv -q",
      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
}

std::string report_args() {
  return "report --rates rates.csv --traces traces.csv --summary summary.csv --fit fit.json --diagnostics diag.csv "
         "--package datapackage.json -q -o report.html";
}

std::vector<const XmlNode*> find(const XmlNode& root, const std::string& name, const std::string& cls = "") {
  return root.all([&](const XmlNode& n) { return n.name == name && (cls.empty() || n.has_class(cls)); });
}

// Checks what every report must hold, against the rates table it was drawn from.
void check_structure(const std::string& html, const Table& rates) {
  CHECK(html.rfind("<!DOCTYPE html>\n<html lang=\"en\">", 0) == 0);
  for (const char* banned : {"http", "url(", "src=", "<script", "@import", "<link", "<img", "<iframe", "@font-face"})
    CHECK_MESSAGE(html.find(banned) == std::string::npos, "the page holds " << banned);
  auto doc = test::parse_xml(html);
  REQUIRE_MESSAGE(doc.error == "", doc.error);
  const XmlNode& root = *doc.root;
  CHECK(root.name == "html");

  // Ids are unique and every in-page link has a target.
  std::set<std::string> ids;
  for (const XmlNode* n : root.all([](const XmlNode& x) { return x.has("id"); }))
    CHECK_MESSAGE(ids.insert(n->attr("id")).second, "duplicate id " << n->attr("id"));
  for (const XmlNode* a : find(root, "a")) {
    const std::string href = a->attr("href");
    REQUIRE_MESSAGE(href.size() > 1, "link without a fragment");
    CHECK(href[0] == '#');
    CHECK_MESSAGE(ids.count(href.substr(1)) == 1, "dangling link " << href);
  }

  // One panel per rates row, in a plate of its (source, channel).
  const int c_src = rates.column("source"), c_ch = rates.column("channel"), c_well = rates.column("well");
  const int c_t0 = rates.column("t_start_s"), c_t1 = rates.column("t_end_s"), c_flags = rates.column("flags");
  const int c_role = rates.column("role");
  std::map<std::string, const XmlNode*> panels;
  auto all_panels = find(root, "g", "well");
  for (const XmlNode* g : all_panels) CHECK_MESSAGE(panels.emplace(g->attr("id"), g).second, g->attr("id"));
  CHECK(all_panels.size() == rates.rows.size());
  std::map<std::string, std::string> plate_ids;  // source + channel → p1, p2, …
  std::map<std::string, int> heat_cells;
  for (const XmlNode* r :
       root.all([](const XmlNode& x) { return x.name == "rect" && x.has("data-well") && !x.has_class("window"); }))
    ++heat_cells[r->parent->attr("href")];
  for (std::size_t i = 0; i < rates.rows.size(); ++i) {
    const auto& row = rates.rows[i];
    const std::string key = row[c_src] + "|" + row[c_ch];
    if (!plate_ids.count(key)) plate_ids[key] = "p" + std::to_string(plate_ids.size() + 1);
    const std::string id = plate_ids[key] + "-" + row[c_well];
    INFO("well ", id);
    auto it = panels.find(id);
    REQUIRE(it != panels.end());
    const XmlNode& g = *it->second;
    CHECK(g.attr("data-well") == row[c_well]);
    CHECK(g.has_class("role-" + row[c_role]));
    // The heat map links here exactly once.
    CHECK(heat_cells["#" + id] == 1);
    // The window: where rates.csv says, on the panel's time axis.
    auto windows = find(g, "rect", "window");
    if (row[c_t0].empty()) {
      CHECK(windows.empty());
    } else {
      REQUIRE(windows.size() == 1);
      const XmlNode& w = *windows[0];
      CHECK(w.attr("data-t-start-s") == row[c_t0]);
      CHECK(w.attr("data-t-end-s") == row[c_t1]);
      const double t0 = std::stod(g.attr("data-t0-s")), t1 = std::stod(g.attr("data-t1-s"));
      const double x0 = std::stod(g.attr("data-x0")), x1 = std::stod(g.attr("data-x1"));
      auto x_of = [&](double t) { return x0 + (t - t0) / (t1 - t0) * (x1 - x0); };
      const double a = x_of(std::stod(row[c_t0])), b = x_of(std::stod(row[c_t1]));
      // Coordinates carry one decimal: each end is within 0.05 (+ rounding of the axis ends).
      CHECK_ABS(std::stod(w.attr("x")), a, 0.11);
      CHECK_ABS(std::stod(w.attr("x")) + std::stod(w.attr("width")), b, 0.21);
    }
    // Flags as words in the panel (all of them in its tooltip, the first two lines drawn).
    std::string words;
    for (const XmlNode* t : find(g, "text", "wflags")) words += t->text + " ";
    std::string tip;
    for (const XmlNode* t : find(g, "title")) tip += t->text;
    std::vector<std::string> flags;
    for (const auto& f : split_words(row[c_flags]))
      if (f != "empty") flags.push_back(f);
    for (const auto& f : flags) CHECK_MESSAGE(tip.find(f) != std::string::npos, "flag " << f << " not in the tooltip");
    if (!flags.empty()) CHECK_MESSAGE(words.find(flags[0]) != std::string::npos, "flag not written: " << words);
  }
}

}  // namespace

TEST_CASE("demo report from the files of a run: structure, provenance, fit") {
  test::TempDir dir;
  run_demo(dir);
  auto r = test::run_vzero(report_args(), dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string html = test::slurp(dir / "report.html");
  MESSAGE("demo report: " << html.size() << " bytes");
  const Table rates = read_table(dir / "rates.csv");
  REQUIRE(rates.rows.size() == 96);
  check_structure(html, rates);
  auto doc = test::parse_xml(html);
  const XmlNode& root = *doc.root;

  // Provenance: the export's checksum as coreutils' sha256sum computes it (an independent
  // implementation of FIPS 180-4) is in the header.
  auto sum = std::system(
      ("sha256sum '" + test::source("demo-data/hydrolase_wide.csv") + "' > '" + (dir / "sum.txt") + "'").c_str());
  REQUIRE(sum == 0);
  const std::string digest = test::slurp(dir / "sum.txt").substr(0, 64);
  auto hashes = root.all([](const XmlNode& n) { return n.name == "td" && n.has_class("hash"); });
  bool found = false;
  for (const XmlNode* h : hashes) found = found || h->text == digest;
  CHECK_MESSAGE(found, "sha256 " << digest << " not in the provenance table");
  CHECK(html.find("<dt>epsilon</dt><dd>18000</dd>") != std::string::npos);
  CHECK(html.find("no clock time") != std::string::npos);
  // What the export says of itself (demo-data/hydrolase_wide.csv's header lines), and only
  // the options that applied: a fixed path, so no water-band settings in the list.
  for (const char* meta : {"<dt>Operator</dt><dd>demo</dd>", "<dt>Plate ID</dt><dd>DEMO-0001</dd>",
                           "<dt>Run started</dt><dd>2026-11-30 10:15</dd>"})
    CHECK_MESSAGE(html.find(meta) != std::string::npos, meta);
  CHECK(html.find("<dt>water-k</dt>") == std::string::npos);
  CHECK(html.find("<dt>path-cm</dt><dd>0.5</dd>") != std::string::npos);
  CHECK(html.find("not applicable to this run (another path was taken): standard-read, water-high, water-k, "
                  "water-low.") != std::string::npos);

  // One heat map with a cell per well; the summary table has a row per group.
  auto maps = find(root, "svg", "heatmap");
  REQUIRE(maps.size() == 1);
  CHECK(maps[0]->all([](const XmlNode& n) { return n.name == "rect" && n.has("data-well"); }).size() == 96);
  const Table summary = read_table(dir / "summary.csv");
  auto tables = find(root, "table", "summary");
  REQUIRE(tables.size() == 1);
  CHECK(find(*tables[0], "tr").size() == summary.rows.size() + 1);

  // The fit: parameters, three charts, one band and one curve per inhibitor level (0, 50 µM).
  // Two fit groups: enzyme 5 nM (fitted) and the single 50 nM well (A12, too few points).
  auto fits = find(root, "article", "fit");
  REQUIRE(fits.size() == 2);
  const std::string fit_text = fits[0]->all_text();
  CHECK(fits[1]->all_text().find("too few") != std::string::npos);
  for (const char* p : {"Vmax", "Km", "Kic", "v = Vmax*S/(Km*(1 + I/Kic) + S)"})
    CHECK_MESSAGE(fit_text.find(p) != std::string::npos, p);
  CHECK(find(*fits[0], "figure", "chart").size() == 3);
  // The sample rows of the 5 nM group the fit left out (flagged in rates.csv) are drawn
  // apart in the v–S chart, one mark each.
  std::size_t left_out = 0;
  for (const auto& row : rates.rows)
    if (row[rates.column("role")] == "sample" && row[rates.column("enzyme_nM")] == "5" &&
        !row[rates.column("flags")].empty())
      ++left_out;
  REQUIRE(left_out == 7);  // the fit's note: "skipped 7 flagged rows"
  auto hollow = find(*fits[0], "path", "left-out");
  REQUIRE(hollow.size() == 1);
  const std::string hd = hollow[0]->attr("d");
  CHECK(static_cast<std::size_t>(std::count(hd.begin(), hd.end(), 'M')) == left_out);
  auto bands = find(*fits[0], "polygon", "ci-band");
  REQUIRE(bands.size() == 2);
  CHECK(find(*fits[0], "path", "fit-curve").size() == 4);  // v–S and double-reciprocal, two levels each
  // 161 curve samples along the upper edge and back along the lower one.
  std::size_t commas = 0;
  for (char c : bands[0]->attr("points")) commas += c == ',';
  CHECK(commas == 2 * 161);
  for (const char* label : {"substrate S (\u00b5M)", "v (\u00b5M/min)", "1/v (min/\u00b5M)", "1/S (1/\u00b5M)"})
    CHECK_MESSAGE(fit_text.find(label) != std::string::npos, label);
}

TEST_CASE("the same inputs give the same bytes, in the rates call or from the files") {
  test::TempDir dir;
  run_demo(dir, "--report inline.html");
  auto r = test::run_vzero(
      "report --rates rates.csv --traces traces.csv --summary summary.csv --package "
      "datapackage.json -q -o from_files.html",
      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string inline_html = test::slurp(dir / "inline.html");
  CHECK(inline_html.size() > 10000);
  CHECK(inline_html == test::slurp(dir / "from_files.html"));
  r = test::run_vzero(
      "report --rates rates.csv --traces traces.csv --summary summary.csv --package "
      "datapackage.json -q -o again.html",
      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  CHECK(test::slurp(dir / "again.html") == inline_html);
  // --date is the only way a date gets in.
  r = test::run_vzero("report rates.csv -q --date 2026-03-14 -o dated.html", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  CHECK(test::slurp(dir / "dated.html").find("date: 2026-03-14") != std::string::npos);
  CHECK(inline_html.find("date:") == std::string::npos);
}

TEST_CASE("1536-well plate: a heat-map overview and the panels in blocks of 8 x 12") {
  test::TempDir dir;
  auto sim = test::write_sim_plate(dir.path.string(), PlateFormat{32, 48});
  auto r = test::run_vzero(
      "rates sim_plate.csv --layout sim_map.csv --epsilon 18000 --path-cm 0.5 -o rates.csv "
      "--traces traces.csv --summary summary.csv --report report.html -q",
      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string html = test::slurp(dir / "report.html");
  MESSAGE("1536-well report: " << html.size() << " bytes, traces table " << test::slurp(dir / "traces.csv").size()
                               << " bytes");
  CHECK(html.size() < 8'000'000);
  const Table rates = read_table(dir / "rates.csv");
  REQUIRE(rates.rows.size() == 1536);
  check_structure(html, rates);
  auto doc = test::parse_xml(html);
  auto blocks = find(*doc.root, "section", "block");
  REQUIRE(blocks.size() == 16);
  for (const XmlNode* b : blocks) CHECK(find(*b, "g", "well").size() == 96);
  CHECK(blocks[0]->attr("id") == "p1-block-A1");
  CHECK(blocks[15]->attr("id") == "p1-block-Y37");
  // The overview: one heat map, 1536 cells; the overflowing wells are flagged.
  CHECK(find(*doc.root, "svg", "heatmap").size() == 1);
  CHECK(find(*doc.root, "path", "hm-flag").size() >= 4);
}

TEST_CASE("without traces, summary or fit the page still renders and says what is missing; no package is an error") {
  test::TempDir dir;
  run_demo(dir);
  auto r = test::run_vzero("report --rates rates.csv --package datapackage.json -o bare.html", dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  CHECK(r.out.rfind("wrote bare.html (", 0) == 0);
  const std::string html = test::slurp(dir / "bare.html");
  check_structure(html, read_table(dir / "rates.csv"));
  CHECK(html.find("No traces table was given: panels show the window but no curve (pass --traces).") !=
        std::string::npos);
  CHECK(html.find("No summary table was given (pass --summary).") != std::string::npos);
  CHECK(html.find("id=\"fits\"") == std::string::npos);
  // The report does not guess the plate, direction or map columns: datapackage.json is required.
  r = test::run_vzero("report --rates rates.csv -o x.html", dir.path.string());
  CHECK(r.status == 2);
  CHECK(r.err.find("--rates needs --package datapackage.json") != std::string::npos);
  // Points of the fit without --diagnostics: taken from the fitted table at the fit's lines.
  r = test::run_vzero("report --rates rates.csv --package datapackage.json --fit fit.json -q -o fit_only.html",
                      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  auto doc = test::parse_xml(test::slurp(dir / "fit_only.html"));
  REQUIRE(doc.error == "");
  auto pts =
      doc.root->all([](const XmlNode& n) { return n.name == "path" && n.has_class("pt") && !n.has_class("left-out"); });
  REQUIRE(pts.size() == 6);  // two levels in each of three charts
  CHECK(test::slurp(dir / "fit_only.html").find("No observed points") == std::string::npos);
}

TEST_CASE("a falling, unconverted signal is drawn in the reaction direction with its line on it") {
  // One well, signal falling 0.01 per s (e.g. NADH consumed), rate given per minute in the
  // reaction direction: slope 0.6 AU/min, intercept 0; datapackage.json records the
  // direction "down".
  ReportInput in;
  in.package_json = test::mini_package("x.csv", "A340", "down");
  in.package_source = "datapackage.json";
  in.rates = parse_table("r.csv",
                         "source,channel,well,row,column,role,v0,v0_se,v0_unit,slope,slope_unit,intercept,t_start_s,"
                         "t_end_s,flags\nx.csv,A340,B2,B,2,sample,0.6,0.01,AU/min,0.6,AU/min,0,20,80,\n");
  std::string traces = "source,channel,well,time_s,status,raw,blank,corrected,concentration,used\n";
  for (int i = 0; i <= 10; ++i)
    traces += fmt::format("x.csv,A340,B2,{},ok,{},0,{},,{}\n", 10 * i, 1 - 0.1 * i, -0.1 * i, i >= 2 && i <= 8 ? 1 : 0);
  in.traces = parse_table("t.csv", traces);
  const std::string html = render_report(in);
  auto doc = test::parse_xml(html);
  REQUIRE_MESSAGE(doc.error == "", doc.error);
  auto trace = find(*doc.root, "path", "trace");
  auto line = find(*doc.root, "path", "fit-line");
  REQUIRE(trace.size() == 1);
  REQUIRE(line.size() == 1);
  // "M x y L x y …": the trace rises on the page (y falls) and the line's ends sit on the
  // trace's points at 20 s and 80 s.
  auto coords = [](const std::string& d) {
    std::vector<double> v;
    std::string cur;
    for (char c : d + " ") {
      if ((c >= '0' && c <= '9') || c == '.' || c == '-')
        cur += c;
      else if (!cur.empty())
        v.push_back(std::stod(cur)), cur.clear();
    }
    return v;
  };
  const auto t = coords(trace[0]->attr("d")), l = coords(line[0]->attr("d"));
  REQUIRE(t.size() == 22);
  REQUIRE(l.size() == 4);
  CHECK(t[1] > t[21]);
  CHECK_ABS(l[0], t[4], 0.051);
  CHECK_ABS(l[1], t[5], 0.051);
  CHECK_ABS(l[2], t[16], 0.051);
  CHECK_ABS(l[3], t[17], 0.051);
  CHECK(html.find("signal change in the reaction direction") == std::string::npos);  // wording of the lede instead:
  CHECK(html.find("the blank-corrected signal in the reaction direction (AU)") != std::string::npos);
}

TEST_CASE("errors name the file, the column and the fix") {
  ReportInput in;
  in.package_json = test::mini_package("x.csv", "A405", "up");
  in.package_source = "datapackage.json";
  in.rates = parse_table("r.csv", "source,channel,well,role,v0\nx.csv,A405,A1,sample,1\n");
  try {
    (void)render_report(in);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "r.csv:1: expected a column named \"v0_unit\"; found: source, channel, well, role, v0\n"
          "  possible fix: give the table vzero rates wrote (it has this column)");
  }
  in.rates = parse_table("r.csv",
                         "source,channel,well,role,v0,v0_unit,slope,intercept,t_start_s,t_end_s,flags\n"
                         "x.csv,A405,A1,sample,fast,uM/min,1,0,0,60,\n");
  try {
    (void)render_report(in);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "r.csv:2:22: expected a number in column \"v0\", found \"fast\"\n"
          "  possible fix: write numbers with '.' as the decimal mark and no units or thousands separators");
  }
  in.rates = parse_table("r.csv",
                         "source,channel,well,role,v0,v0_unit,slope,intercept,t_start_s,t_end_s,flags\n"
                         "x.csv,A405,Z99,sample,1,uM/min,1,0,0,60,\n");
  try {
    (void)render_report(in);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.formatted() == "r.csv:2:12: \"Z99\" is not a well name\n  possible fix: wells are named A1 … AF48");
  }
  in.rates = parse_table("r.csv",
                         "source,channel,well,role,v0,v0_unit,slope,intercept,t_start_s,t_end_s,flags\n"
                         "x.csv,A405,A1,sample,1,uM/min,1,0,0,60,\n");
  in.fits = {{"{x", "fit.json", std::nullopt}};
  try {
    (void)render_report(in);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "fit.json: cannot read the JSON: [json.exception.parse_error.101] parse error at line 1, column 2: syntax "
          "error "
          "while parsing object key - invalid literal; last read: '{x'; expected string literal\n"
          "  possible fix: give the file vzero wrote, unchanged");
  }
  in.fits = {{"{}", "fit.json", std::nullopt}};
  try {
    (void)render_report(in);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.formatted() == "fit.json: expected a \"fits\" list\n  possible fix: give the --json file vzero fit wrote");
  }
  in.fits.clear();
  in.package_json = test::mini_package("x.csv", "A405", "sideways");
  try {
    (void)render_report(in);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "datapackage.json: expected vzero.channels[].direction \"up\" or \"down\"; found \"sideways\"\n"
          "  possible fix: give the datapackage.json vzero rates wrote beside this rates table, unchanged");
  }
  in.package_json = "";
  try {
    (void)render_report(in);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.formatted().rfind("r.csv: the report needs the run's datapackage.json", 0) == 0);
  }
  auto r = test::run_vzero("report -o x.html");
  CHECK(r.status == 2);
  CHECK(r.err ==
        "vzero report: give the run folder (vzero report RUN_FOLDER) or --rates rates.csv\n  see: vzero report "
        "--help\n");
  r = test::run_vzero("report /nonexistent/run");
  CHECK(r.status == 1);
  CHECK(r.err.rfind("/nonexistent/run: expected a run folder or its rates table; \"/nonexistent/run\" does not exist",
                    0) == 0);
}

TEST_CASE("report options are validated") {
  ReportOptions o;
  CHECK(o.validate() == "");
  o.block_rows = 0;
  CHECK(o.validate() == "block_rows is 0; a block needs at least one row");
  o.block_rows = 8;
  o.panel_wells = 0;
  CHECK(o.validate() == "panel_wells is 0; it must be at least 1");
  ReportInput in;
  in.rates = parse_table("r.csv",
                         "source,channel,well,role,v0,v0_unit,slope,intercept,t_start_s,t_end_s,flags\n"
                         "x.csv,A405,A1,sample,1,uM/min,1,0,0,60,\n");
  CHECK_THROWS_AS((void)render_report(in, o), UsageError);
  auto r = test::run_vzero("report --help");
  CHECK(r.status == 0);
  CHECK(r.out.rfind("usage: vzero report RUN_FOLDER|rates.csv", 0) == 0);
}

TEST_CASE("a fluorescence run with standards shows its standard curve (REFERENCES §7 values)") {
  // Standard wells hold the constructed calibration of shared REFERENCES.md §7 (RFU = 120 +
  // 850·c plus written-out offsets; expected fit from R lm), read unchanged at every read;
  // the samples are invented.
  const double conc[] = {0, 0.5, 1, 2, 4, 8, 16, 0, 0.5, 1, 2, 4, 8, 16};
  const double rfu[] = {126, 536, 984, 1799, 3550, 6876, 13780, 116, 556, 955, 1838, 3487, 6967, 13668};
  test::TempDir dir;
  std::string map = "well,role,standard_conc,substrate\n", head = "Channel: ex360/em460\nTime [s]";
  std::vector<std::string> wells;
  for (int k = 0; k < 14; ++k) {
    wells.push_back(well_name({k % 7, k / 7}));
    map += fmt::format("{},standard,{},\n", wells.back(), conc[k]);
  }
  for (int k = 0; k < 6; ++k) {
    wells.push_back(well_name({k, 2}));
    map += fmt::format("{},sample,,{}\n", wells.back(), 10 * (k + 1));
  }
  for (const auto& w : wells) head += "," + w;
  std::string csv = head + "\n";
  for (int r = 0; r < 12; ++r) {
    csv += std::to_string(30 * r);
    for (int k = 0; k < 14; ++k) csv += fmt::format(",{}", rfu[k]);
    for (int k = 0; k < 6; ++k) csv += fmt::format(",{}", 150 + (k + 1) * 0.8 * 30 * r + ((r * 7 + k) % 5));
    csv += "\n";
  }
  test::spit(dir / "fluor.csv", csv);
  test::spit(dir / "fluor_map.csv", map);
  auto r = test::run_vzero(
      "rates fluor.csv --layout fluor_map.csv --standards --blank none -o rates.csv --report report.html -q",
      dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string html = test::slurp(dir / "report.html");
  check_structure(html, read_table(dir / "rates.csv"));
  auto doc = test::parse_xml(html);
  auto sections = doc.root->all([](const XmlNode& n) { return n.attr("id") == "standards"; });
  REQUIRE(sections.size() == 1);
  const std::string text = sections[0]->all_text();
  // R lm (REFERENCES §7): intercept 119.4661654135323, slope 850.2456140350879,
  // R² 0.9999519882975277; LOD 3·sd(126, 116)/slope = 0.024949… µM.
  CHECK(text.find("= 119.5 + 850.2 \u00b7 c") != std::string::npos);
  CHECK(text.find("0.99995") != std::string::npos);
  CHECK(text.find("0.0249 \u00b5M (zero-standards)") != std::string::npos);
  CHECK(text.find("signal (RFU)") != std::string::npos);
  auto pts = sections[0]->all([](const XmlNode& n) { return n.name == "path" && n.has_class("pt"); });
  REQUIRE(pts.size() == 1);
  const std::string d = pts[0]->attr("d");
  CHECK(std::count(d.begin(), d.end(), 'M') == 14);  // one circle per standard well
}

TEST_CASE("two exports: one plate section each, ids stay unique") {
  test::TempDir dir;
  const std::string d = test::source("demo-data");
  auto r = test::run_vzero("rates '" + d + "/hydrolase_wide.csv' '" + d + "/hydrolase_long.csv' --layout '" + d +
                               "/hydrolase_map.csv' --method '" + d +
                               "/esterase_method.toml' -o rates.csv --report report.html -q",
                           dir.path.string());
  REQUIRE_MESSAGE(r.status == 0, r.describe());
  const std::string html = test::slurp(dir / "report.html");
  const Table rates = read_table(dir / "rates.csv");
  REQUIRE(rates.rows.size() == 192);
  check_structure(html, rates);
  auto doc = test::parse_xml(html);
  auto plates = find(*doc.root, "section", "plate");
  REQUIRE(plates.size() == 2);
  CHECK(plates[0]->attr("id") == "p1");
  CHECK(plates[1]->attr("id") == "p2");
}
