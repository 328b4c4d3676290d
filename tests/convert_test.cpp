// Signal → concentration: Beer–Lambert paths, standard curves, units.
#include <cmath>

#include "test_support.hpp"
#include "vzero/convert.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/settings.hpp"

using namespace vzero;

namespace {
Run plate(const std::string& text) { return read_run_text("plate.csv", text, load_profile("wide-generic")); }
const std::string k_two_wells = "Time [s],A1,A2\n0,0.1,0.2\n30,0.2,0.3\n";
}  // namespace

TEST_CASE("Beer–Lambert with NADH at 340 nm") {
  // Source: ε340(NADH) = 6220 M⁻¹·cm⁻¹, commonly cited to Horecker & Kornberg (1948) J. Biol.
  // Chem. 175, 385 (shared REFERENCES.md §6). Worked example: 0.0622 AU/min over 1 cm is
  // 0.0622 / 6220 M/min = 1e-5 M/min = 10 µM/min; over 0.5 cm it is 20 µM/min.
  Run run = plate(k_two_wells);
  PlateMap map = parse_plate_map("map.csv", "well,role\nA1,sample\n");
  ConvertOptions o;
  o.mode = ConvertMode::beer_lambert;
  o.epsilon_per_m_cm = epsilon_presets().at(0).epsilon_per_m_cm;
  CHECK(o.epsilon_per_m_cm == 6220);
  o.path_cm = 1.0;
  Conversion cv = plan_conversion(run, run.channels[0], map, o);
  CHECK_REL(0.0622 * cv.factor[0], 10.0, 1e-12);
  o.path_cm = 0.5;
  cv = plan_conversion(run, run.channels[0], map, o);
  CHECK_REL(0.0622 * cv.factor[0], 20.0, 1e-12);
  CHECK(cv.path_source == "fixed");
  // The export names no quantity for its one channel: the formula recorded says it was
  // taken as absorbance (an A340 section would not need saying).
  CHECK(run.channels[0].quantity == Quantity::other);
  CHECK(cv.formula ==
        "c = A / (ε·l), ε = 6220 M⁻¹·cm⁻¹, l = 0.5 cm; in uM; channel signal states no quantity: its signal is "
        "taken as absorbance");
  o.conc_unit = "mM";
  cv = plan_conversion(run, run.channels[0], map, o);
  CHECK_REL(0.0622 * cv.factor[0], 0.020, 1e-12);
}

TEST_CASE("path length of a liquid cylinder, V / (π r²)") {
  // Hand-worked: 200 µL in a 6.96 mm well: r = 3.48 mm, π r² = 38.04594 mm², 200 mm³ / 38.04594 mm²
  // = 5.256802 mm = 0.5256802 cm (the meniscus is ignored).
  Run run = plate(k_two_wells);
  PlateMap map = parse_plate_map("map.csv", "well,role\nA1,sample\n");
  ConvertOptions o;
  o.mode = ConvertMode::beer_lambert;
  o.epsilon_per_m_cm = 6220;
  o.volume_ul = 200;
  o.well_diameter_mm = 6.96;
  Conversion cv = plan_conversion(run, run.channels[0], map, o);
  CHECK_REL(cv.path_cm[0], 0.5256802, 1e-6);
  CHECK(cv.path_source == "cylinder");
}

TEST_CASE("path length per well from the water peak") {
  // Worked example (shared REFERENCES.md §6): l = (A977 − A900) / k with k = 0.18 AU per cm
  // (common practice, room temperature): 0.0900 / 0.18 = 0.5 cm. A2: 0.1260 / 0.18 = 0.7 cm.
  Run run = plate(
      "Channel: A405\nTime [s],A1,A2\n0,0.1,0.2\n30,0.2,0.3\n\n"
      "Channel: A977\nTime [s],A1,A2\n0,0.1400,0.1800\n\n"
      "Channel: A900\nTime [s],A1,A2\n0,0.0500,0.0540\n");
  PlateMap map = parse_plate_map("map.csv", "well,role\nA1,sample\nA2,sample\n");
  ConvertOptions o;
  o.mode = ConvertMode::beer_lambert;
  o.epsilon_per_m_cm = 6220;
  o.water_peak = true;
  Conversion cv = plan_conversion(run, run.channels[0], map, o);
  CHECK_REL(cv.path_cm[0], 0.5, 1e-12);
  CHECK_REL(cv.path_cm[1], 0.7, 1e-12);
  o.water_low = "A910";
  try {
    plan_conversion(run, run.channels[0], map, o);
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "plate.csv: the water-peak path length needs channels A977 and A910; the file has: A405, A977, A900\n"
          "  possible fix: name the water channels with --water-high and --water-low, or give --path-cm");
  }
}

TEST_CASE("enzyme units and katal") {
  // 1 U = 1 µmol/min (IUB 1961, via Dybkaer 2002 Clin. Chem. 48, 586); 1 kat = 1 mol/s (SI, 21st
  // CGPM 1999, Resolution 12): 1 U = 1e-6/60 mol/s = 16.666… nkat.
  CHECK_REL(k_nkat_per_unit, 16.666666666666668, 1e-14);
  // 10 µM/min in 200 µL: 10e-6 mol/L/min × 200e-6 L = 2e-9 mol/min = 0.002 µmol/min = 0.002 U.
  CHECK_REL(activity_units(10, "uM", 200), 0.002, 1e-12);
  CHECK_REL(activity_units(10, "uM", 200) * k_nkat_per_unit, 0.0333333333333333, 1e-12);
  CHECK_REL(activity_units(0.01, "mM", 200), 0.002, 1e-12);
}

TEST_CASE("inner-filter correction") {
  // Lakowicz, Principles of Fluorescence Spectroscopy, 3rd ed. (2006), ch. 2:
  // F_corr = F_obs · 10^((A_ex + A_em)/2); 1000 with 0.10 and 0.05 → 1188.5022274370185.
  CHECK_REL(inner_filter_corrected(1000, 0.10, 0.05), 1188.5022274370185, 1e-12);
}

TEST_CASE("linear standard curve matches R lm on the REFERENCES §7 dataset") {
  // Source: shared REFERENCES.md §7 (constructed RFU = 120 + 850·c with offsets; values from R lm).
  const double conc[] = {0, 0.5, 1, 2, 4, 8, 16, 0, 0.5, 1, 2, 4, 8, 16};
  const double rfu[] = {126, 536, 984, 1799, 3550, 6876, 13780, 116, 556, 955, 1838, 3487, 6967, 13668};
  std::vector<std::pair<double, double>> pts;
  for (int i = 0; i < 14; ++i) pts.emplace_back(conc[i], rfu[i]);
  StandardCurve sc = fit_standard_curve(pts, "map.csv");
  CHECK_REL(sc.intercept, 119.4661654135323, 1e-10);
  CHECK_REL(sc.intercept_se, 11.874766161392092, 1e-10);
  CHECK_REL(sc.slope, 850.2456140350879, 1e-10);
  CHECK_REL(sc.slope_se, 1.700739334782603, 1e-10);
  CHECK_REL(sc.residual_sd, 33.97224160496084, 1e-10);
  CHECK_ABS(sc.r2, 0.9999519882975277, 1e-12);
  CHECK_REL((5000 - sc.intercept) / sc.slope, 5.740145852002075, 1e-10);  // inverse prediction
  CHECK(sc.conc_max == 16);
  CHECK(sc.signal_max == 13780);
  // LOD from the two zero standards: 3·sd(126, 116)/b = 3·7.0710678/850.2456 µM.
  CHECK(sc.lod_basis == "zero-standards");
  CHECK_REL(sc.lod, 3 * std::sqrt(50.0) / 850.2456140350879, 1e-10);
}

TEST_CASE("a standard curve from the map's standard wells converts rates by 1/b") {
  // Exact synthetic standards: RFU = 50 + 1000·c, so b = 1000 RFU per µM and 1/b = 1e-3 µM per RFU.
  Run run = plate("Channel: ex360/em460\nTime [s],A1,A2,A3,A4\n0,50,550,1050,2050\n30,50,550,1050,2050\n");
  PlateMap map = parse_plate_map(
      "map.csv", "well,role,standard_conc\nA1,standard,0\nA2,standard,0.5\nA3,standard,1\nA4,standard,2\n");
  ConvertOptions o;
  o.mode = ConvertMode::standard_curve;
  Conversion cv = plan_conversion(run, run.channels[0], map, o);
  REQUIRE(cv.curve);
  CHECK_REL(cv.curve->slope, 1000, 1e-12);
  CHECK_REL(cv.curve->intercept, 50, 1e-12);
  CHECK_REL(cv.factor[0], 1e-3, 1e-12);
}

TEST_CASE("conversion errors") {
  Run run = plate(k_two_wells);
  PlateMap map = parse_plate_map("map.csv", "well,role\nA1,sample\n");
  AnalysisOptions a;
  ConvertOptions& o = a.convert;
  o.mode = ConvertMode::beer_lambert;
  o.epsilon_per_m_cm = 0;
  o.path_cm = 0.5;
  CHECK(check_analysis_options(a) == "epsilon is 0; expected a number above 0");
  o.epsilon_per_m_cm = 6220;
  o.path_cm = -1;
  CHECK(check_analysis_options(a) == "path-cm is -1; expected a number above 0");
  o.path_cm = NAN;
  CHECK(check_analysis_options(a) ==
        "Beer–Lambert needs a path length: give --path-cm, or --volume-ul with --well-diameter-mm, or --water-peak");
  ConvertOptions f;
  f.mode = ConvertMode::standard_curve;
  try {
    plan_conversion(run, run.channels[0], map, f);
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "map.csv: the standard curve needs at least 3 standard wells with 2 or more different concentrations; "
          "found 0 wells, 0 concentrations\n"
          "  possible fix: mark standard wells with role = standard and their `standard_conc` in the plate map");
  }
  {
    // Beer–Lambert on an emission channel: refused, naming the absorbance channel to keep.
    Run two = plate("Channel: A340\nTime [s],A1\n0,0.1\n30,0.2\nChannel: Ex485Em520\nTime [s],A1\n0,100\n30,200\n");
    REQUIRE(two.channels.size() == 2);
    REQUIRE(two.channels[1].quantity == Quantity::fluorescence);
    ConvertOptions b;
    b.mode = ConvertMode::beer_lambert;
    b.epsilon_per_m_cm = 6220;
    b.path_cm = 1;
    CHECK_NOTHROW(plan_conversion(two, two.channels[0], map, b));
    try {
      plan_conversion(two, two.channels[1], map, b);
      FAIL("expected an error");
    } catch (const InputError& e) {
      CHECK(e.formatted() ==
            "plate.csv: --epsilon converts absorbance by Beer–Lambert, but channel Ex485Em520 is fluorescence (RFU)\n"
            "  possible fixes:\n"
            "    - convert fluorescence with a standard curve (--standards, standard wells in the plate map) or keep "
            "signal units (--signal-only)\n"
            "    - to convert only the absorbance channels, give --channel A340\n"
            "    - if the channel is in fact absorbance, set `signal.quantity = \"absorbance\"` (or a section's "
            "`quantity`) in the profile");
    }
  }
  std::vector<std::pair<double, double>> falling{{0, 300}, {1, 200}, {2, 100}};
  try {
    fit_standard_curve(falling, "map.csv");
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(e.formatted() ==
          "map.csv: the standards do not rise with concentration (slope -100 signal per unit)\n"
          "  possible fix: check the `standard_conc` values and that the standard wells hold the product");
  }
}
