// A screening campaign end to end on simulated plates with a known truth (tests/sim/screen_sim.hpp,
// invented): four 384-well screen plates — one clean, one with a drift across the plate
// (rates rising 20 % from column 1 to 24), one with a badly dispensed control column, one read
// late in the day with 15 % of the enzyme's activity lost — and a dose-response plate.
// Sources of the check values:
//   - Z′ = 1 − 3(σ₊ + σ₋)/|μ₊ − μ₋| (Zhang, Chung & Oldenburg, J. Biomol. Screen. 4:67, 1999),
//     worked here from the control rows of rates.csv, and from the simulator's true rates;
//   - the planted actives and the planted defects (the simulator's truth);
//   - IC50s from R 4.2.2's nls with the SSfpl self-starting model on the points vzero fitted
//     (tests/reference/campaign: the script, its output and the points).
#include <fmt/format.h>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <map>
#include <set>
#include <string>
#include <vector>

#include "report/report_campaign.hpp"
#include "sim/screen_sim.hpp"
#include "test_support.hpp"
#include "vzero/svg.hpp"
#include "vzero/table.hpp"

using namespace vzero;
using namespace vzero::test;

namespace {

// Actives planted on every screen plate: well → true % activity (inhibition 60–95 %).
const std::vector<std::pair<std::string, double>> k_actives = {{"B5", 5},   {"C12", 10}, {"D20", 15}, {"F7", 20},
                                                               {"H15", 25}, {"J3", 30},  {"K18", 35}, {"M9", 40},
                                                               {"O21", 12}, {"P6", 8}};
constexpr double k_hit_threshold = 50;  // % inhibition

std::vector<sim::ScreenPlateSpec> screen_plates() {
  std::vector<sim::ScreenPlateSpec> p(4);
  for (std::size_t k = 0; k < p.size(); ++k) p[k].seed = 100 + k, p[k].actives = k_actives;
  p[1].column_drift = 0.2;  // a drift across the plate
  p[2].bad_column = 23;     // a bad control column (full-activity)
  p[2].bad_spread = 0.6;
  p[3].enzyme_factor = 0.85;  // later in the day
  return p;
}
const char* k_started[] = {"2026-12-01 09:00", "2026-12-01 10:30", "2026-12-01 12:00", "2026-12-01 15:30"};

// Column `name` of table t's row r.
std::string cell(const Table& t, std::size_t r, const std::string& name) {
  return t.rows[r][static_cast<std::size_t>(t.require_column(name, ""))];
}

// Z′ worked here from a list of rates per control (sample standard deviation, n − 1).
double z_prime_by_hand(const std::vector<double>& full, const std::vector<double>& none) {
  auto mean = [](const std::vector<double>& v) {
    double s = 0;
    for (double x : v) s += x;
    return s / static_cast<double>(v.size());
  };
  auto sd = [&](const std::vector<double>& v) {
    const double m = mean(v);
    double ss = 0;
    for (double x : v) ss += (x - m) * (x - m);
    return std::sqrt(ss / static_cast<double>(v.size() - 1));
  };
  return 1 - 3 * (sd(full) + sd(none)) / std::fabs(mean(full) - mean(none));
}

struct Written {
  std::vector<sim::ScreenPlate> plates;
  std::string args;  // the exports, in order
};

Written write_screen(const TempDir& dir) {
  Written w;
  const auto specs = screen_plates();
  for (std::size_t k = 0; k < specs.size(); ++k) {
    w.plates.push_back(sim::simulate_screen(sim::ScreenSpec{}, specs[k]));
    const std::string name = "plate" + std::to_string(k + 1) + ".csv";
    sim::write_screen_wide(dir / name, w.plates.back(), k_started[k]);
    w.args += name + " ";
  }
  sim::write_screen_map(dir / "map.csv", w.plates.front(), false);
  return w;
}

}  // namespace

TEST_CASE("a simulated campaign: Z' by hand, the bad plate marked, the planted actives called") {
  TempDir dir;
  const Written w = write_screen(dir);
  std::filesystem::create_directories(dir.path / "out");
  const auto r = run_vzero("rates " + w.args +
                               "--layout map.csv --signal-only --blank none -o out/rates.csv --traces out/traces.csv "
                               "--summary out/summary.csv --plate-quality out/pq.csv --hit-threshold 50 "
                               "--report out/run_report.html",
                           dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  const Table rates = read_table(dir / "out/rates.csv"), pq = read_table(dir / "out/pq.csv");
  REQUIRE(pq.rows.size() == 4);
  const std::string html = slurp(dir / "out/run_report.html");
  for (std::size_t k = 0; k < 4; ++k) {
    const std::string source = "plate" + std::to_string(k + 1) + ".csv";
    CAPTURE(source);
    std::vector<double> full, none, true_full, true_none;
    std::map<std::string, std::string> hit;  // well → hit cell
    for (std::size_t i = 0; i < rates.rows.size(); ++i) {
      if (cell(rates, i, "source") != source) continue;
      const std::string role = cell(rates, i, "role"), well = cell(rates, i, "well");
      if (role == "sample") hit[well] = cell(rates, i, "hit");
      if (role == "sample" || !cell(rates, i, "flags").empty()) continue;
      (role == "full-activity" ? full : none).push_back(std::stod(cell(rates, i, "v0")));
    }
    for (const auto& sw : w.plates[k].wells)
      if (sw.role != "sample") (sw.role == "full-activity" ? true_full : true_none).push_back(sw.v_per_min);
    // Z′ takes the unflagged control wells (a flag may fall on a straight line by chance, as
    // the curvature test's α allows): the plate-quality table counts the same wells.
    CHECK(full.size() >= 30);
    CHECK(none.size() >= 30);
    CHECK(cell(pq, k, "n_full") == std::to_string(full.size()));
    CHECK(cell(pq, k, "n_no") == std::to_string(none.size()));
    const double z = z_prime_by_hand(full, none);
    REQUIRE(cell(pq, k, "source") == source);
    CHECK(std::stod(cell(pq, k, "z_prime")) == doctest::Approx(z).epsilon(1e-12));
    // The rate finder's v0 sits close to the true rates: Z′ within 0.03 of the truth's.
    CHECK(std::fabs(z - z_prime_by_hand(true_full, true_none)) < 0.03);
    // The campaign section draws the same Z′ (six decimals in the page).
    CHECK(html.find(fmt::format("data-plate=\"p{}\" data-z-prime=\"{}\"", k + 1, svg::num(z, 6))) != std::string::npos);
    // The bad control column (plate 3) is the one plate below the common-practice Z′ ≥ 0.5;
    // the drift across plate 2 costs Z′ but not the verdict (worked from the truth: ≈ 0.7).
    CHECK(cell(pq, k, "quality") == (k == 2 ? "below-threshold" : "pass"));
    // Planted actives (inhibition ≥ 60 %) are all called at 50 %; an inactive well (activity
    // N(100, 3 %) with a 3 % pipetting CV, so inhibition within ±5 % as one SD, and the plate's
    // drift within ±10 %) is more than 8 SD from the threshold: noise allows no false call.
    std::set<std::string> called;
    for (const auto& [well, h] : hit)
      if (h == "yes") called.insert(well);
    std::set<std::string> planted;
    for (const auto& [well, pct] : k_actives) planted.insert(well);
    CHECK(called == planted);
    CHECK(hit.size() == 320);
  }
  CHECK(html.find("<section id=\"campaign\">") != std::string::npos);
  CHECK(html.find("Below the Z\u2032 threshold 0.5: plate 3.") != std::string::npos);
  // The exports record their start: the plates are placed by read time.
  CHECK(html.find("placed by the read time each export records (Run started)") != std::string::npos);
  // `vzero report` on the run folder draws the same page, byte for byte.
  const auto again = run_vzero("report out -o out/report.html", dir.path.string());
  INFO(again.describe());
  REQUIRE(again.status == 0);
  CHECK(slurp(dir / "out/report.html") == html);
}

TEST_CASE("one export, or no controls: no campaign section") {
  TempDir dir;
  write_screen(dir);
  for (const char* sub : {"one", "two"}) std::filesystem::create_directories(dir.path / sub);
  auto r =
      run_vzero("rates plate1.csv --layout map.csv --signal-only --blank none -o one/rates.csv --report one/r.html",
                dir.path.string());
  REQUIRE(r.status == 0);
  CHECK(slurp(dir / "one/r.html").find("id=\"campaign\"") == std::string::npos);
  std::string plain = "well,role\n";  // the same plates without controls: every well a sample
  for (int row = 0; row < 16; ++row)
    for (int col = 0; col < 24; ++col) plain += well_name(WellId{row, col}) + ",sample\n";
  spit(dir / "plain.csv", plain);
  r = run_vzero(
      "rates plate1.csv plate2.csv --layout plain.csv --signal-only --blank none -o two/rates.csv --report two/r.html",
      dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  CHECK(slurp(dir / "two/r.html").find("id=\"campaign\"") == std::string::npos);
}

TEST_CASE("a simulated dose-response plate: IC50s as R's nls/SSfpl gives them on the same points") {
  TempDir dir;
  sim::ScreenPlateSpec spec;
  spec.seed = 7;
  spec.dose_response = true;
  const sim::ScreenPlate plate = sim::simulate_screen(sim::ScreenSpec{}, spec);
  sim::write_screen_wide(dir / "dose.csv", plate);
  sim::write_screen_map(dir / "dose_map.csv", plate, true);
  auto r = run_vzero("rates dose.csv --layout dose_map.csv --signal-only --blank none -o rates.csv --quiet",
                     dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  // The points vzero fit takes: unflagged sample rows with an activity.
  const Table rates = read_table(dir / "rates.csv");
  std::string points = "compound,conc_uM,activity_pct\n";
  for (std::size_t i = 0; i < rates.rows.size(); ++i)
    if (cell(rates, i, "role") == "sample" && cell(rates, i, "flags").empty() &&
        !cell(rates, i, "activity_pct").empty())
      points +=
          cell(rates, i, "compound") + "," + cell(rates, i, "conc_uM") + "," + cell(rates, i, "activity_pct") + "\n";
  if (const char* out = std::getenv("VZERO_WRITE_DOSE_POINTS")) spit(out, points);
  const std::string ref = std::string(VZERO_SOURCE_DIR) + "/tests/reference/campaign/";
  // R fitted exactly these points (tests/reference/campaign/README.md to regenerate).
  REQUIRE(points == slurp(ref + "dose_points.csv"));
  r = run_vzero("fit rates.csv --x conc_uM --y activity_pct --model 4pl --group compound -q -o fit.csv",
                dir.path.string());
  INFO(r.describe());
  REQUIRE(r.status == 0);
  const Table fit = read_table(dir / "fit.csv"), R = read_table(ref + "ic50_reference.csv");
  std::map<std::string, std::map<std::string, double>> ours;  // compound → parameter → estimate
  for (std::size_t i = 0; i < fit.rows.size(); ++i)
    ours[cell(fit, i, "compound")][cell(fit, i, "parameter")] = std::stod(cell(fit, i, "estimate"));
  int compared = 0;
  for (std::size_t i = 0; i < R.rows.size(); ++i) {
    const std::string compound = cell(R, i, "compound");
    if (compound == "r_version") continue;
    CAPTURE(compound);
    REQUIRE(ours.count(compound) == 1);
    for (const char* p : {"IC50", "hill"}) {
      CAPTURE(p);
      const double theirs = std::stod(cell(R, i, p));
      CHECK(std::fabs(ours[compound][p] / theirs - 1) < 5e-5);  // 4 significant figures (R, above)
    }
    for (const char* p : {"top", "bottom"}) {  // % activity: to 0.005 % (bottom may sit near 0)
      CAPTURE(p);
      CHECK(std::fabs(ours[compound][p] - std::stod(cell(R, i, p))) < 5e-3);
    }
    // And the planted IC50 (the simulator's truth) is recovered within 15 %.
    const std::size_t k = static_cast<std::size_t>(std::stoi(compound.substr(6)) - 1);
    CHECK(std::fabs(ours[compound]["IC50"] / spec.ic50_uM[k] - 1) < 0.15);
    ++compared;
  }
  CHECK(compared == 8);
}

TEST_CASE("read times: only a full date and time is read; an impossible day is none") {
  using detail::report::parse_read_time;
  // Days since 1970-01-01 from Python's datetime: date(2026, 12, 1) is day 20,788,
  // date(2024, 2, 29) day 19,782.
  CHECK(parse_read_time("2026-12-01 09:00") == 20788.0 * 24 + 9);
  CHECK(parse_read_time("2026-12-01T09:30:36") == 20788.0 * 24 + 9 + 30.0 / 60 + 36.0 / 3600);
  CHECK(parse_read_time("2024-02-29 00:00") == 19782.0 * 24);
  for (const char* bad : {"2023-02-29 00:00", "2026-04-31 10:00", "2026-13-01 10:00", "2026-12-01 24:00",
                          "2026-12-01", "01.12.2026 09:00", "2026-12-01 9:00", "DEMO-0001"})
    CHECK(std::isnan(parse_read_time(bad)));
}
