// End to end through the library: read → blank → Beer–Lambert → rate, against a
// closed-form progress curve.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "test_support.hpp"
#include "vzero/analysis.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/outputs.hpp"
#include "vzero/table.hpp"

using namespace vzero;

namespace {
// P(t) in µM for S0 = 100 µM, Km = 50 µM, Vmax = 10 µM/min, t = 0, 0.5, … 10 min, from the
// closed form of Schnell & Mendoza (1997) J. theor. Biol. 187, 207 (shared REFERENCES.md §5).
const double k_p_um[] = {0.0,
                         3.314607337890237,
                         6.590919048890015,
                         9.827638840971858,
                         13.023429557141199,
                         16.176913775128895,
                         19.286674795530573,
                         22.351258078284815,
                         25.36917319247091,
                         28.33889634912326,
                         31.258873590818837,
                         34.127524714845904,
                         36.943248008382156,
                         39.70442587379613,
                         42.40943141936712,
                         45.056636084756086,
                         47.6444183607739,
                         50.171173648686505,
                         52.63532528480666,
                         55.03533673087366,
                         57.36972489931373};

// A340 = 0.0450 + 6220·0.5·P·1e-6 in A2 (full precision) and A3 (4 decimals); blank A1 = 0.0450.
std::string nadh_plate() {
  std::string s = "Time [s],A1,A2,A3\n";
  for (int i = 0; i < 21; ++i) {
    double a = 0.0450 + 6220 * 0.5 * k_p_um[i] * 1e-6;
    s += fmt::format("{},0.0450,{},{:.4f}\n", 30 * i, format_number(a), a);
  }
  return s;
}
}  // namespace

TEST_CASE("NADH-style trace: plate blank, ε = 6220, l = 0.5 cm, OLS over the first 4 reads") {
  // Expected (shared REFERENCES.md §5, computed with SciPy/R): the OLS slope of P over the first
  // 4 points is 6.551845646783069 µM/min; on the 4-decimal column the blank-subtracted slope is
  // exactly 3.4e-4 AU/s, i.e. 3.4e-4 · 60 / (6220 · 0.5) · 1e6 = 6.559485530546624 µM/min.
  Run run = read_run_text("nadh.csv", nadh_plate(), load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv", "well,role,substrate\nA1,blank,\nA2,sample,100\nA3,sample,100\n");
  AnalysisOptions o;
  o.convert.mode = ConvertMode::beer_lambert;
  o.convert.epsilon_per_m_cm = 6220;
  o.convert.path_cm = 0.5;
  o.rates.window = WindowMethod::leading;
  o.rates.estimator = Estimator::ols;
  o.rates.min_points = 4;
  o.rates.tangent = TangentMode::never;  // the reference values are for the straight line
  RunAnalysis a = analyse_run(run, map, o);
  REQUIRE(a.channels.size() == 1);
  const auto& rows = a.channels[0].rows;
  REQUIRE(rows.size() == 3);
  CHECK(a.channels[0].v0_unit == "uM/min");
  CHECK_REL(rows[1].v0, 6.551845646783069, 1e-12);
  CHECK_REL(rows[2].v0, 6.559485530546624, 1e-12);
  CHECK_REL(rows[2].slope_per_min, 3.4e-4 * 60, 1e-12);
  CHECK(rows[1].rate.n_points == 4);
  CHECK(rows[1].rate.t_end_s == 90);
  // Conversion at the window's end: P(1.5 min) = 9.8276 µM of 100 µM (vzero reads it off the
  // fitted line, so it agrees to the line's residual, ~1e-5 relative).
  CHECK_REL(rows[1].rate.conversion, 0.09827638840971858, 1e-4);
  CHECK(rows[0].role == Role::blank);
}

TEST_CASE("direction down reports consumption as a positive rate") {
  // The same trace mirrored (signal falling) with direction down gives the same v0.
  std::string s = "Time [s],A1,A2\n";
  for (int i = 0; i < 21; ++i)
    s += fmt::format("{},1.0,{}\n", 30 * i, format_number(1.0 - 6220 * 0.5 * k_p_um[i] * 1e-6));
  Run run = read_run_text("down.csv", s, load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv", "well,role\nA1,blank\nA2,sample\n");
  AnalysisOptions o;
  o.convert.mode = ConvertMode::beer_lambert;
  o.convert.epsilon_per_m_cm = 6220;
  o.convert.path_cm = 0.5;
  o.rates.window = WindowMethod::leading;
  o.rates.estimator = Estimator::ols;
  o.rates.min_points = 4;
  o.rates.tangent = TangentMode::never;
  o.direction = Direction::down;
  RunAnalysis a = analyse_run(run, map, o);
  CHECK_REL(a.channels[0].rows[1].v0, 6.551845646783069, 1e-10);
}

TEST_CASE("results do not depend on the thread count") {
  std::string path = vzero::test::source("demo-data/hydrolase_wide.csv");
  Run run = read_run(path, load_profile("wide-generic"));
  PlateMap map = read_plate_map(vzero::test::source("demo-data/hydrolase_map.csv"));
  AnalysisOptions o;
  o.threads = 1;
  RunAnalysis one = analyse_run(run, map, o);
  o.threads = 2;
  RunAnalysis two = analyse_run(run, map, o);
  CHECK(rates_csv({one}, map.columns, false) == rates_csv({two}, map.columns, false));
}

TEST_CASE("inner-filter correction of a fluorescence channel") {
  // F rises 10 RFU/s; the well absorbs 0.10 at the excitation and 0.05 at the emission
  // wavelength, so every read is multiplied by 10^(0.15/2) = 1.1885022274370185 (Lakowicz,
  // Principles of Fluorescence Spectroscopy, 3rd ed., ch. 2): slope 11.885 RFU/s = 713.1 RFU/min.
  std::string s = "Channel: ex360/em460\nTime [s],A1\n";
  for (int i = 0; i < 10; ++i) s += fmt::format("{},{}\n", 10 * i, 1000 + 100 * i);
  s += "\nChannel: A360\nTime [s],A1\n0,0.10\n\nChannel: A460\nTime [s],A1\n0,0.05\n";
  Run run = read_run_text("f.csv", s, load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv", "well,role\nA1,sample\n");
  AnalysisOptions o;
  o.blank.strategy = BlankStrategy::none;
  o.rates.estimator = Estimator::ols;
  o.rates.tangent = TangentMode::never;
  o.channels = {"ex360/em460"};
  o.inner_filter_ex = "A360";
  o.inner_filter_em = "A460";
  RunAnalysis a = analyse_run(run, map, o);
  CHECK_REL(a.channels[0].rows[0].v0, 600 * 1.1885022274370185, 1e-9);
  CHECK(a.channels[0].v0_unit == "RFU/min");
}

TEST_CASE("enzyme activity and specific activity") {
  // 0.0622 AU/min with ε = 6220 M⁻¹·cm⁻¹ and l = 1 cm is 10 µM/min (shared REFERENCES.md §6);
  // in 200 µL that is 0.002 U (1 U = 1 µmol/min); with 0.0005 mg of enzyme, 4 U/mg.
  std::string s = "Time [s],A1\n";
  for (int i = 0; i < 10; ++i) s += fmt::format("{},{}\n", 30 * i, format_number(0.05 + 0.0622 / 60 * 30 * i));
  Run run = read_run_text("a.csv", s, load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv", "well,role,enzyme_mg\nA1,sample,0.0005\n");
  AnalysisOptions o;
  o.blank.strategy = BlankStrategy::none;
  o.convert.mode = ConvertMode::beer_lambert;
  o.convert.epsilon_per_m_cm = 6220;
  o.convert.path_cm = 1;
  o.well_volume_ul = 200;
  o.enzyme_mg_column = "enzyme_mg";
  RunAnalysis a = analyse_run(run, map, o);
  const RateRow& r = a.channels[0].rows[0];
  CHECK_REL(r.v0, 10, 1e-9);
  CHECK_REL(r.activity_u, 0.002, 1e-9);
  CHECK_REL(r.specific_activity, 4, 1e-9);
  o.enzyme_mg_column = "enzyme";
  CHECK_THROWS_AS(analyse_run(run, map, o), InputError);
}

TEST_CASE("a sample rising past the top standard is flagged outside-standards") {
  // Standards 0–2 µM at RFU = 100 + 1000·c (top standard 2100 RFU). Sample A5 climbs 5 RFU/s
  // from 100 to 1450 RFU and stays inside; A6 climbs from 2000 to 3350 RFU and leaves the range.
  std::string s = "Time [s],A1,A2,A3,A4,A5,A6\n";
  for (int i = 0; i < 10; ++i) s += fmt::format("{},100,600,1100,2100,{},{}\n", 30 * i, 100 + 150 * i, 2000 + 150 * i);
  Run run = read_run_text("f.csv", s, load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv",
                                 "well,role,standard_conc\nA1,standard,0\nA2,standard,0.5\nA3,standard,1\n"
                                 "A4,standard,2\nA5,sample,\nA6,sample,\n");
  AnalysisOptions o;
  o.blank.strategy = BlankStrategy::none;
  o.convert.mode = ConvertMode::standard_curve;
  o.rates.estimator = Estimator::ols;
  o.rates.tangent = TangentMode::never;
  RunAnalysis a = analyse_run(run, map, o);
  const auto& rows = a.channels[0].rows;
  // 150 RFU per 30 s = 300 RFU/min, / 1000 RFU per µM = 0.3 µM/min.
  CHECK_REL(rows[4].v0, 0.3, 1e-9);
  CHECK(rows[4].flags.empty());
  CHECK(rows[5].flags == std::vector<std::string>{"outside-standards"});
}

namespace {
// Absorbance read through stray light, a fraction s of the beam that reaches the detector
// without passing through the sample: A_read = −log10((10^−A + s)/(1 + s)) (common practice:
// the stray-light error of absorbance photometers; the form is checked below against a worked
// example).
double through_stray_light(double a, double s) { return -std::log10((std::pow(10.0, -a) + s) / (1 + s)); }
}  // namespace

TEST_CASE("the absorbance limit keeps stray light from flattening a rate unflagged") {
  // The form against a worked example (T = 0.05, i.e. A = 1.301, with stray light 2 % of the
  // incident beam reads 1.163): -log10((0.05 + 0.02)/(1 + 0.02)).
  CHECK(through_stray_light(-std::log10(0.05), 0.02) == doctest::Approx(1.1635).epsilon(1e-4));
  // s = 0.1 %. A rising trace is read at dA_read/dA = 1/(1 + s·10^A) of its slope: 0.9693 at
  // 1.5 AU, 0.9091 at 2 AU. Well A2 climbs 1.00 → 1.40 AU (true slope 0.04 AU/min), so every
  // read lies under the default limit and its rate is at most 2.5 % low (1/(1 + 10^−3·10^1.4)
  // = 0.9755). Well A3 is a turbid well: 1.75 → 1.87 AU at 0.012 AU/min, read 5.3–6.9 % flat.
  // A1 is the blank at 0.05 AU. Read noise ±0.0008 AU in a fixed pseudo-random pattern.
  const double s = 1e-3;
  const double noise[] = {0.6, -0.9, 0.2, 1.0, -0.4, -0.8, 0.7, 0.1, -1.0, 0.5, 0.9,
                          -0.3, -0.7, 0.3, 0.8, -0.6, -0.1, 0.4, -0.9, 0.6, -0.2};
  std::string text = "Channel: A405\nTime [s],A1,A2,A3\n";
  for (int i = 0; i < 21; ++i) {
    const double e = 0.0008 * noise[i], e_blank = 0.0008 * noise[20 - i];
    text += fmt::format("{},{:.5f},{:.5f},{:.5f}\n", 30 * i, through_stray_light(0.05, s) + e_blank,
                        through_stray_light(1.0 + 0.02 * i, s) + e, through_stray_light(1.75 + 0.006 * i, s) - e);
  }
  Run run = read_run_text("stray.csv", text, load_profile("wide-generic"));
  REQUIRE(run.channels[0].quantity == Quantity::absorbance);
  PlateMap map = parse_plate_map("map.csv", "well,role\nA1,blank\nA2,sample\nA3,sample\n");
  AnalysisOptions o;
  CHECK(o.rates.absorbance_limit == 1.5);
  RunAnalysis a = analyse_run(run, map, o);
  const auto& rows = a.channels[0].rows;
  REQUIRE(rows.size() == 3);
  CHECK(a.channels[0].v0_unit == "AU/min");
  // A2: trusted, and between the compressed slope at 1.4 AU and the true one (noise allowed).
  CHECK(rows[1].flags.empty());
  CHECK(rows[1].v0 > 0.04 * 0.9755 * 0.99);
  CHECK(rows[1].v0 < 0.04 * 1.01);
  // A3: every read above the limit, so its rate is flagged, not reported 6 % low as trusted.
  CHECK(std::find(rows[2].flags.begin(), rows[2].flags.end(), "ceiling") != rows[2].flags.end());
  // What the earlier limit of 2 AU gave: A3 unflagged and more than 5 % low.
  o.rates.absorbance_limit = 2;
  RunAnalysis old = analyse_run(run, map, o);
  const RateRow& a3 = old.channels[0].rows[2];
  CHECK(a3.flags.empty());
  CHECK(a3.v0 < 0.012 * 0.95);
  CHECK(a3.v0 > 0.012 * 0.90);
}
