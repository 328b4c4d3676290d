// Screening beyond Z′ (include/vzero/plate_quality.hpp): the controls' edge and drift trends,
// each sample's robust z-score, the compound columns of the plate map, the console's
// per-plate block and the EnzymeML document of a screen. The plates are constructed here:
// every well a straight line of known slope, so each v0 is known and the statistics are
// worked by hand below.
#include <fmt/format.h>
#include <cmath>
#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "test_support.hpp"
#include "vzero/plate_quality.hpp"
#include "vzero/table.hpp"

using namespace vzero;
using namespace vzero::test;

namespace {

// A wide export: reads every 60 s for 10 min, well W's signal 100 + rate·t/min (signal only).
std::string wide_export(const std::map<std::string, double>& rate_per_min) {
  std::string out = "Time [s]";
  for (const auto& [w, r] : rate_per_min) out += "," + w;
  out += "\n";
  for (int k = 0; k <= 10; ++k) {
    out += std::to_string(60 * k);
    for (const auto& [w, r] : rate_per_min) out += fmt::format(",{}", 100 + r * k);
    out += "\n";
  }
  return out;
}

std::string well(int row, int column) { return fmt::format("{}{}", static_cast<char>('A' + row), column + 1); }

// The planted plate: full-activity controls in columns 1 and 11, no-activity in 2 and 12 (rows
// A–H); v0 = level + 0.1 per column index (0-based) ± 0.5 alternating by row (+ on A, C, E, G).
// Means: full 10 + 0.1·5 = 10.5, none 1 + 0.1·6 = 1.6 (the ±0.5 cancel in each column), so
// the control window μ₊ − μ₋ = 8.9.
std::vector<ControlPoint> planted_controls() {
  std::vector<ControlPoint> p;
  for (int r = 0; r < 8; ++r) {
    const double noise = r % 2 ? -0.5 : 0.5;
    for (int c : {0, 10}) p.push_back({r, c, true, 10 + 0.1 * c + noise});
    for (int c : {1, 11}) p.push_back({r, c, false, 1 + 0.1 * c + noise});
  }
  return p;
}

PlateControls controls_of(const std::vector<ControlPoint>& points) {
  std::vector<double> full, none;
  for (const auto& p : points) (p.full ? full : none).push_back(p.v0);
  PlateControls pc;
  pc.full = control_stats(full);
  pc.none = control_stats(none);
  return pc;
}

std::map<std::string, std::string> column_by(const std::string& csv, const std::string& key, const std::string& name) {
  const Table t = parse_table("t.csv", csv);
  const auto k = static_cast<std::size_t>(t.require_column(key, "")),
             c = static_cast<std::size_t>(t.require_column(name, ""));
  std::map<std::string, std::string> out;
  for (const auto& row : t.rows) out[row[k]] = row[c];
  return out;
}

}  // namespace

TEST_CASE("a planted column gradient in the controls: slope, change and t-test worked by hand") {
  const auto points = planted_controls();
  const PlateControls pc = controls_of(points);
  REQUIRE(pc.full.mean == doctest::Approx(10.5).epsilon(1e-14));
  REQUIRE(pc.none.mean == doctest::Approx(1.6).epsilon(1e-14));
  const PlateTrends t = control_trends(points, 8, 12, pc, 0.01);
  // Analysis of covariance with one intercept per control and a common slope (Snedecor &
  // Cochran, Statistical Methods, 8th ed., ch. 18, from memory): y = 100·v0/8.9; each
  // control's columns lie 5 from its mean column (x̄ = 5 and 6), Sxx = 32·25 = 800; the ±0.5
  // cancel within each column, so b = 100·0.1/8.9 per column, the change across the 11
  // column steps 1100/8.9 activity points.
  CHECK(t.column.slope == doctest::Approx(10 / 8.9).epsilon(1e-12));
  CHECK(t.column.change_pct == doctest::Approx(110 / 8.9).epsilon(1e-12));
  CHECK(t.column.n == 32);
  // Residuals ±50/8.9: RSS = 32·(50/8.9)², df = 32 − 3 = 29, SE(b) = √(RSS/29/800), so
  // t = (10/8.9)/SE = 0.2·√725 = 5.385; two-sided p = 2*pt(-0.2*sqrt(725), 29) in R 4.2
  // (Debian r-base-core) = 8.69947544839049e-06.
  CHECK(t.column.p == doctest::Approx(8.69947544839049e-06).epsilon(1e-9));
  // Rows: x̄ = 3.5 in each control's two columns, Sxx = 4·42 = 168; Σ(r − 3.5)(±0.5) over
  // rows = 0.5·(−4) per column, four columns: b = 100/8.9·(−8)/168.
  CHECK(t.row.slope == doctest::Approx(-800 / 8.9 / 168).epsilon(1e-12));
  CHECK(t.row.change_pct == doctest::Approx(-7 * 800 / 8.9 / 168).epsilon(1e-12));
  CHECK(t.significant().find("column") != std::string::npos);
  CHECK(t.significant().find("row") == std::string::npos);
  // Without a gradient (the same plate, 0.1 per column taken out) the column slope is 0 and
  // p = 1: the ±0.5 do not vary with the column.
  std::vector<ControlPoint> flat = points;
  for (auto& p : flat) p.v0 -= 0.1 * p.column;
  const PlateTrends f = control_trends(flat, 8, 12, controls_of(flat), 0.01);
  CHECK(std::fabs(f.column.slope) < 1e-12);
  CHECK(f.column.p == doctest::Approx(1).epsilon(1e-9));
  CHECK(f.significant().find("column") == std::string::npos);
}

TEST_CASE("a trend that cannot be tested is empty, never a number") {
  // Every full-activity control in column 1, every no-activity one in column 12: the column
  // does not vary within a control, so the column trend cannot be told from the controls'
  // difference (a confounded design).
  std::vector<ControlPoint> p;
  for (int r = 0; r < 8; ++r) {
    p.push_back({r, 0, true, 10 + 0.1 * r});
    p.push_back({r, 11, false, 1 + 0.05 * r});
  }
  const PlateTrends t = control_trends(p, 8, 12, controls_of(p), 0.01);
  CHECK(std::isnan(t.column.p));
  CHECK(std::isnan(t.column.change_pct));
  CHECK(!std::isnan(t.row.p));  // rows vary within each control
  // Equal control means: no window, nothing tested.
  PlateControls same = controls_of(p);
  same.none = same.full;
  CHECK(std::isnan(control_trends(p, 8, 12, same, 0.01).row.p));
}

TEST_CASE("robust z-score of a sample worked by hand") {
  PlateControls pc;
  // Samples 5, 6, 7, 8, 9, 10, 11, 30: median 8.5; absolute deviations sorted 0.5, 0.5, 1.5,
  // 1.5, 2.5, 2.5, 3.5, 21.5, MAD 2; σ estimate 1.4826·2 (common practice).
  pc.samples = control_stats({5, 6, 7, 8, 9, 10, 11, 30});
  CHECK(pc.robust_z(30) == doctest::Approx(21.5 / (1.4826 * 2)).epsilon(1e-14));
  CHECK(pc.robust_z(8.5) == 0);
  PlateControls flat;
  flat.samples = control_stats({4, 4, 4});  // MAD 0: no z-score
  CHECK(std::isnan(flat.robust_z(5)));
}

TEST_CASE("vzero rates on the planted plate: trend columns, the warning, robust_z and the per-plate block") {
  TempDir dir;
  std::map<std::string, double> rates;
  std::string map = "well,role\n";
  for (const auto& p : planted_controls()) {
    rates[well(p.row, p.column)] = p.v0;
    map += well(p.row, p.column) + (p.full ? ",full-activity\n" : ",no-activity\n");
  }
  const double samples[] = {5, 6, 7, 8, 9, 10, 11, 30};  // robust z as in the test case above
  for (int r = 0; r < 8; ++r) {
    rates[well(r, 2)] = samples[r];
    map += well(r, 2) + ",sample\n";
  }
  spit(dir / "plate.csv", wide_export(rates));
  spit(dir / "map.csv", map);
  auto r = run_vzero("rates plate.csv --layout map.csv --signal-only --blank none -o rates.csv --plate-quality pq.csv "
                     "--hit-threshold 50",
                     dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  const std::string pq = slurp(dir / "pq.csv");
  CHECK(std::stod(column_by(pq, "source", "trend_column_p").at("plate.csv")) ==
        doctest::Approx(8.69947544839049e-06).epsilon(1e-6));  // R, as above
  CHECK(std::stod(column_by(pq, "source", "trend_column_change_pct").at("plate.csv")) ==
        doctest::Approx(110 / 8.9).epsilon(1e-9));
  CHECK(column_by(pq, "source", "trends").at("plate.csv") == "column");
  CHECK(column_by(pq, "source", "trend_level").at("plate.csv") == "0.01");
  CHECK(r.err.find("plate.csv, channel") != std::string::npos);
  CHECK(r.err.find("trend with column (p = 8.7e-06, +12.4 activity points across the plate)") != std::string::npos);
  // robust_z beside activity_pct: A3..H3 hold 5..11 and 30; controls have none.
  const std::string csv = slurp(dir / "rates.csv");
  const auto z = column_by(csv, "well", "robust_z");
  CHECK(std::stod(z.at("H3")) == doctest::Approx(21.5 / (1.4826 * 2)).epsilon(1e-9));
  CHECK(std::stod(z.at("A3")) == doctest::Approx(-3.5 / (1.4826 * 2)).epsilon(1e-9));
  CHECK(z.at("A1").empty());
  CHECK(csv.find("inhibition_pct,robust_z,hit") != std::string::npos);
  // The console: one line for the plate, not one per condition; the level recorded.
  CHECK(r.out.find("per plate and channel") != std::string::npos);
  CHECK(r.out.find("mean v0 of the clean replicate wells") == std::string::npos);
  CHECK(r.out.find("trend: column") != std::string::npos);
  CHECK(slurp(dir / "datapackage.json").find("\"trend-level\": \"0.01\"") != std::string::npos);
  // A stricter level silences it.
  auto quiet = run_vzero("rates plate.csv --layout map.csv --signal-only --blank none -o r2.csv --trend-level 1e-6",
                         dir.path.string());
  CHECK(quiet.status == 0);
  CHECK(quiet.err.find("trend with") == std::string::npos);
}

TEST_CASE("compound columns: read, recorded, shown, and vzero fit's default x and group for 4pl") {
  TempDir dir;
  // One invented compound at 8 concentrations, v0 from the four-parameter logistic with top
  // 10, bottom 1, IC50 2 uM, Hill slope 1: v0 = 1 + 9/(1 + c/2) (closed form, noiseless).
  std::map<std::string, double> rates;
  std::string map = "well,role,compound,compound_uM\n";
  const double conc[] = {0.125, 0.25, 0.5, 1, 2, 4, 8, 16};
  for (int r = 0; r < 8; ++r) {
    rates[well(r, 0)] = 10;
    rates[well(r, 1)] = 1 + 9 / (1 + conc[r] / 2);
    rates[well(r, 11)] = 1;
    map += fmt::format("{},full-activity,,\n{},sample,CPD-7,{}\n{},no-activity,,\n", well(r, 0), well(r, 1), conc[r],
                       well(r, 11));
  }
  spit(dir / "plate.csv", wide_export(rates));
  spit(dir / "map.csv", map);
  auto r = run_vzero("rates plate.csv --layout map.csv --signal-only --blank none -o rates.csv", dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  CHECK(r.err.find("compounds from `compound`, compound concentrations from `compound_uM` (in uM, from its header)") !=
        std::string::npos);
  const auto pkg = nlohmann::json::parse(slurp(dir / "datapackage.json"));
  std::map<std::string, std::string> read_as;
  for (const auto& u : pkg["vzero"]["map_column_uses"]) read_as[u["column"]] = u["read_as"];
  CHECK(read_as.at("compound") == "compound");
  CHECK(read_as.at("compound_uM") == "compound_conc");
  auto fit = run_vzero("fit rates.csv --model 4pl -o fit.csv", dir.path.string());
  INFO(fit.describe());
  REQUIRE(fit.status == 0);
  CHECK(fit.err.find("x = compound_uM, group = compound") != std::string::npos);
  // Exact recovery on noiseless data: IC50 = 2 (the closed form above).
  const Table t = parse_table("fit.csv", slurp(dir / "fit.csv"));
  bool seen = false;
  for (const auto& row : t.rows)
    if (row[static_cast<std::size_t>(t.require_column("parameter", ""))] == "IC50") {
      CHECK(std::stod(row[static_cast<std::size_t>(t.require_column("estimate", ""))]) ==
            doctest::Approx(2).epsilon(1e-6));
      CHECK(row[static_cast<std::size_t>(t.require_column("compound", ""))] == "CPD-7");
      seen = true;
    }
  CHECK(seen);
  // A text concentration is an error at its line and column, naming the column.
  spit(dir / "bad.csv", "well,role,compound,compound_uM\nA1,full-activity,,\nA2,sample,CPD-7,ten\nA12,no-activity,,\n");
  auto bad = run_vzero("rates plate.csv --layout bad.csv --signal-only --blank none -o b.csv", dir.path.string());
  CHECK(bad.status == 1);
  CHECK(bad.err.find("bad.csv:3:") != std::string::npos);
  CHECK(bad.err.find("expected a number in `compound_uM`") != std::string::npos);
}

TEST_CASE("a screen map's concentration column that is read as nothing is reported, and the option fixes it") {
  TempDir dir;
  spit(dir / "plate.csv", wide_export({{"A1", 10}, {"B1", 11}, {"A2", 5}, {"A12", 1}, {"B12", 1.2}}));
  spit(dir / "map.csv",
       "well,role,cpd,dose (nM)\nA1,full-activity,,\nB1,full-activity,,\nA2,sample,X,30\nA12,no-activity,,\n"
       "B12,no-activity,,\n");
  auto r = run_vzero("rates plate.csv --layout map.csv --signal-only --blank none -o rates.csv", dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  CHECK(r.err.find("plate-map column `dose (nM)` looks like a concentration but is read as neither the compound "
                   "concentration") != std::string::npos);
  CHECK(r.err.find("--compound-conc-column \"dose (nM)\"") != std::string::npos);
  auto fixed = run_vzero(
      "rates plate.csv --layout map.csv --signal-only --blank none -o r2.csv --compound-conc-column dose "
      "--compound-column cpd",
      dir.path.string());
  INFO(fixed.describe());
  REQUIRE(fixed.status == 0);
  CHECK(fixed.err.find("looks like a concentration") == std::string::npos);
  CHECK(fixed.err.find("compound concentrations from `dose (nM)` (in nM, from its header)") != std::string::npos);
  // A named column the map lacks is an error naming the map's columns.
  auto missing = run_vzero("rates plate.csv --layout map.csv --signal-only --blank none -o r3.csv "
                           "--compound-conc-column conc",
                           dir.path.string());
  CHECK(missing.status == 1);
  CHECK(missing.err.find("map.csv:1: --compound-conc-column names `conc`") != std::string::npos);
}

TEST_CASE("EnzymeML of a screen: control wells are left out and the document says so") {
  TempDir dir;
  spit(dir / "plate.csv", wide_export({{"A1", 10}, {"B1", 11}, {"A2", 5}, {"B2", 6}, {"A12", 1}, {"B12", 1.2}}));
  spit(dir / "map.csv",
       "well,role,substrate\nA1,full-activity,100\nB1,full-activity,100\nA2,sample,100\nB2,sample,100\n"
       "A12,no-activity,100\nB12,no-activity,100\n");
  auto r = run_vzero("rates plate.csv --layout map.csv --signal-only --blank none -o rates.csv --enzymeml run.json",
                     dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  const auto doc = nlohmann::json::parse(slurp(dir / "run.json"));
  // The two sample wells only (EnzymeML measurements are of the substrate series).
  CHECK(doc["measurements"].size() == 2);
  for (const auto& m : doc["measurements"]) {
    const std::string id = m["id"];
    CHECK((id.find("A2") != std::string::npos || id.find("B2") != std::string::npos));
  }
  CHECK(doc["description"].get<std::string>().find("4 screening control wells (roles full-activity and no-activity) "
                                                   "are left out") != std::string::npos);
}

TEST_CASE("the console lists plates, not conditions, beyond 50 conditions; 50 keep the condition lines") {
  // No controls: 51 sample wells, each its own substrate level, is one condition too many
  // (k_plate_digest_conditions = 50); the plate line counts wells and samples, with no Z′.
  TempDir dir;
  const auto run = [&](int samples) {
    std::map<std::string, double> rates;
    std::string map = "well,role,substrate\n";
    for (int i = 0; i < samples; ++i) {
      rates[well(i / 12, i % 12)] = 1 + 0.1 * i;
      map += fmt::format("{},sample,{}\n", well(i / 12, i % 12), i + 1);
    }
    spit(dir / "plate.csv", wide_export(rates));
    spit(dir / "map.csv", map);
    return run_vzero("rates plate.csv --layout map.csv --signal-only --blank none -o rates.csv", dir.path.string());
  };
  const auto many = run(51);
  INFO(many.describe());
  REQUIRE(many.status == 0);
  CHECK(many.out.find("per plate and channel; every well in rates.csv:\n  plate.csv  signal  51 wells, 51 samples "
                      "(0 flagged)\n") != std::string::npos);
  CHECK(many.out.find("conditions; mean v0") == std::string::npos);
  CHECK(many.out.find("Z'") == std::string::npos);
  const auto fifty = run(50);
  CHECK(fifty.status == 0);
  CHECK(fifty.out.find("50 conditions; mean v0 of the clean replicate wells") != std::string::npos);
  CHECK(fifty.out.find("per plate and channel") == std::string::npos);
}
