// Blank subtraction: plate, matched and none, read by read or by rate.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "test_support.hpp"
#include "vzero/blank.hpp"
#include "vzero/ingest.hpp"

using namespace vzero;

// A constructed plate whose right answer is known: the substrate hydrolyses on its own at a
// rate proportional to its concentration, so each substrate-only blank (B1, B2) rises at its
// own rate; samples A1, A2 add an enzyme rate of exactly 0.001 AU/s on top.
//   B1 (S=100): 0.05 + 0.0001·t   B2 (S=200): 0.05 + 0.0002·t
//   A1 (S=100): 0.05 + 0.0011·t   A2 (S=200): 0.05 + 0.0012·t
namespace {
const char* k_plate =
    "Time [s],A1,A2,B1,B2\n0,0.05,0.05,0.05,0.05\n30,0.083,0.086,0.053,0.056\n"
    "60,0.116,0.122,0.056,0.062\n90,0.149,0.158,0.059,0.068\n";
const char* k_map =
    "well,role,substrate,match\nA1,sample,100,S100\nA2,sample,200,S200\nB1,blank,100,S100\nB2,blank,200,S200\n";

double slope(const BlankResult& b, const Channel& c, int col) {
  // Exact data: the slope between the first and last read is the slope.
  return (b.corrected(3, col) - b.corrected(0, col)) / (c.time_s[3] - c.time_s[0]);
}
}  // namespace

TEST_CASE("matched blanks recover the enzyme rate exactly; the plate blank does not") {
  Run run = read_run_text("plate.csv", k_plate, load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv", k_map);
  const Channel& c = run.channels[0];
  int a1 = c.column_of(run.format.index(*parse_well("A1")));
  int a2 = c.column_of(run.format.index(*parse_well("A2")));
  BlankOptions o;
  o.strategy = BlankStrategy::matched;
  BlankResult m = apply_blank(c, map, run.format, o);
  CHECK_REL(slope(m, c, a1), 0.001, 1e-9);
  CHECK_REL(slope(m, c, a2), 0.001, 1e-9);
  CHECK(m.wells[static_cast<std::size_t>(a1)].blank_wells == "B1");
  CHECK(m.wells[static_cast<std::size_t>(a2)].blank_wells == "B2");
  CHECK_REL(m.wells[static_cast<std::size_t>(a2)].blank_rate, 0.0002, 1e-9);
  // Plate blank: the mean of B1 and B2 rises at 0.00015 AU/s, so A1 reads 0.00095 and A2 0.00105.
  o.strategy = BlankStrategy::plate;
  BlankResult p = apply_blank(c, map, run.format, o);
  CHECK_REL(slope(p, c, a1), 0.00095, 1e-9);
  CHECK_REL(slope(p, c, a2), 0.00105, 1e-9);
  CHECK(p.wells[static_cast<std::size_t>(a1)].blank_wells == "B1;B2");
  o.strategy = BlankStrategy::none;
  BlankResult n = apply_blank(c, map, run.format, o);
  CHECK_REL(slope(n, c, a1), 0.0011, 1e-9);
}

TEST_CASE("rate mode subtracts the blank's rate over the sample's window") {
  Run run = read_run_text("plate.csv", k_plate, load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv", k_map);
  const Channel& c = run.channels[0];
  BlankOptions o;
  o.strategy = BlankStrategy::matched;
  o.mode = BlankMode::rate;
  int a2 = c.column_of(run.format.index(*parse_well("A2")));
  BlankResult r = apply_blank(c, map, run.format, o);
  CHECK(r.corrected(3, a2) == c.values(3, a2));  // trace left alone
  CHECK_REL(blank_rate_between(c, map, run.format, o, r, a2, 0, 90), 0.0002, 1e-9);
}

TEST_CASE("a sample without its matched blank is flagged, not guessed") {
  Run run = read_run_text("plate.csv", k_plate, load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv", "well,role,match\nA1,sample,S100\nA2,sample,S300\nB1,blank,S100\n");
  BlankOptions o;
  o.strategy = BlankStrategy::matched;
  BlankResult m = apply_blank(run.channels[0], map, run.format, o);
  int a2 = run.channels[0].column_of(run.format.index(*parse_well("A2")));
  CHECK(m.wells[static_cast<std::size_t>(a2)].flags == std::vector<std::string>{"blank-missing"});
  CHECK(m.wells[static_cast<std::size_t>(a2)].blank_wells.empty());
}

TEST_CASE("rate mode: a blank with a disturbed start enters by its line, not its reads") {
  // 20 reads 10 s apart; sample A1 = 0.05 + 0.0011·t, its blank B1 = 0.05 + 0.0001·t minus
  // a mixing disturbance 0.05·e^(−t/10 s) that has died out after a few reads (the decay the
  // start screen is built for, tests/rates_start_test.cpp). The blank's rate in rate mode is
  // the slope of its line after the disturbance (exactly, over any window), within 5 % of
  // 0.0001 /s; its raw reads over 0…190 s would give a slope more than 20 % too high (the
  // low first reads), which would leak into A1's rate.
  std::string text = "Time [s],A1,B1\n";
  for (int i = 0; i < 20; ++i) {
    const double t = 10.0 * i;
    text += fmt::format("{},{},{}\n", t, 0.05 + 0.0011 * t, 0.05 + 0.0001 * t - 0.05 * std::exp(-t / 10));
  }
  Run run = read_run_text("plate.csv", text, load_profile("wide-generic"));
  PlateMap map = parse_plate_map("map.csv", "well,role,match\nA1,sample,x\nB1,blank,x\n");
  const Channel& c = run.channels[0];
  BlankOptions o;
  o.strategy = BlankStrategy::matched;
  o.mode = BlankMode::rate;
  const int a1 = c.column_of(run.format.index(*parse_well("A1")));
  const auto b1 = static_cast<std::size_t>(c.column_of(run.format.index(*parse_well("B1"))));
  BlankResult r = apply_blank(c, map, run.format, o);
  REQUIRE(r.blank_columns == std::vector<int>{static_cast<int>(b1)});
  REQUIRE(r.blank_disturbed[0] > 0);
  // The replaced reads lie on the line of the rest, so over every read the least-squares
  // slope of the blank as subtracted is that line's (its residuals are orthogonal to 1 and t).
  std::vector<double> xs, ys;
  for (int i = r.blank_disturbed[0]; i < 20; ++i) xs.push_back(10.0 * i), ys.push_back(c.values(i, static_cast<Eigen::Index>(b1)));
  double mx = 0, my = 0, sxy = 0, sxx = 0;
  for (std::size_t i = 0; i < xs.size(); ++i) mx += xs[i] / static_cast<double>(xs.size()), my += ys[i] / static_cast<double>(xs.size());
  for (std::size_t i = 0; i < xs.size(); ++i) sxy += (xs[i] - mx) * (ys[i] - my), sxx += (xs[i] - mx) * (xs[i] - mx);
  CHECK_REL(sxy / sxx, 0.0001, 0.05);  // the decay's tail after the reads set aside: +3 %
  CHECK_REL(blank_rate_between(c, map, run.format, o, r, a1, 0, 190), sxy / sxx, 1e-9);
  BlankResult raw = r;
  raw.blank_reads.col(0) = c.values.col(static_cast<Eigen::Index>(b1));
  raw.blank_disturbed[0] = 0;
  CHECK(blank_rate_between(c, map, run.format, o, raw, a1, 0, 190) > 1.2 * 0.0001);
}

// Worked in the test: the pooled within-group SD, √(Σ groups Σ (x − x̄)² / Σ (n − 1)) (common
// practice: the one-way analysis of variance's within-group mean square); a pair (r₁, r₂)
// adds (r₁ − r₂)²/2 on one degree of freedom (Var(r₁ − r₂) = 2σ²).
TEST_CASE("well-to-well drift is the blanks' scatter within their own set, not between sets") {
  // Three sets whose rates differ by 100× between sets (hydrolysis grows with substrate)
  // but by 2e-7 within each pair: each adds (2e-7)²/2 on one degree of freedom, so the
  // pooled SD is 2e-7/√2.
  const std::vector<std::vector<double>> sets = {{1e-6, 1.2e-6}, {1e-4, 1.002e-4}, {1e-2, 1.00002e-2}};
  CHECK_REL(within_set_rate_sd(sets), 2e-7 / std::sqrt(2.0), 1e-6);
  // One set of three: mean 2, Σ(x − x̄)² = 2 on 2 degrees of freedom: SD 1.
  CHECK_REL(within_set_rate_sd({{1.0, 2.0, 3.0}}), 1.0, 1e-12);
  // A set of three and a pair: (2 + (10 − 12)²/2) / (2 + 1) = 4/3.
  int dof = -1;
  CHECK_REL(within_set_rate_sd({{1.0, 2.0, 3.0}, {10.0, 12.0}}, &dof), std::sqrt(4.0 / 3.0), 1e-12);
  CHECK(dof == 3);
  // Too few degrees of freedom (one pair, singletons): unknown, not zero.
  CHECK(std::isnan(within_set_rate_sd({{1.0, 2.0}, {5.0}}, &dof)));
  CHECK(dof == 0);
  CHECK(std::isnan(within_set_rate_sd({})));
}

TEST_CASE("a disturbed blank is left out of a set that has a clean one") {
  // As above, plus a clean blank B2 = 0.05 + 0.0002·t sharing A1's match (worked here: the
  // substrate's own hydrolysis curves nowhere, so B2 alone is the exact blank). Trace mode:
  // A1 − B2 rises at 0.0011 − 0.0002 = 0.0009 /s at every read, the note says B1 was left
  // out, and the blank named is B2 alone. Without B2, B1's line stands in (note blank-line).
  std::string text = "Time [s],A1,B1,B2\n";
  for (int i = 0; i < 20; ++i) {
    const double t = 10.0 * i;
    text += fmt::format("{},{},{},{}\n", t, 0.05 + 0.0011 * t, 0.05 + 0.0001 * t - 0.05 * std::exp(-t / 10),
                        0.05 + 0.0002 * t);
  }
  Run run = read_run_text("plate.csv", text, load_profile("wide-generic"));
  const Channel& c = run.channels[0];
  BlankOptions o;
  o.strategy = BlankStrategy::matched;
  const int a1 = c.column_of(run.format.index(*parse_well("A1")));
  PlateMap both = parse_plate_map("map.csv", "well,role,match\nA1,sample,x\nB1,blank,x\nB2,blank,x\n");
  BlankResult r = apply_blank(c, both, run.format, o);
  const WellBlank& wb = r.wells[static_cast<std::size_t>(a1)];
  CHECK(wb.blank_wells == "B2");
  CHECK(wb.notes == std::vector<std::string>{"blank-left-out"});
  for (Eigen::Index i = 1; i < 20; ++i)
    CHECK_REL((r.corrected(i, a1) - r.corrected(0, a1)) / (c.time_s[static_cast<std::size_t>(i)]), 0.0009, 1e-9);
  PlateMap alone = parse_plate_map("map.csv", "well,role,match\nA1,sample,x\nB1,blank,x\nB2,blank,y\n");
  BlankResult l = apply_blank(c, alone, run.format, o);
  CHECK(l.wells[static_cast<std::size_t>(a1)].blank_wells == "B1");
  CHECK(l.wells[static_cast<std::size_t>(a1)].notes == std::vector<std::string>{"blank-line"});
}

TEST_CASE("a blank with fewer than 3 usable reads is left out; alone, its samples have no blank") {
  // A1 = 0.05 + 0.0011·t, B2 = 0.05 + 0.0002·t (exact), and B1 with one read and every
  // other cell empty (worked here). B1 has no line: it is flagged and left out, so A1 − B2
  // rises at 0.0009 /s at every read (B1's single read, averaged in at t = 0, would have
  // moved the first corrected read), and the note says a blank was left out. With B1 the
  // set's only blank, A1 keeps its reads uncorrected and is flagged blank-missing, not
  // too-few-reads: its own reads are all there.
  std::string text = "Time [s],A1,B1,B2\n";
  for (int i = 0; i < 10; ++i) {
    const double t = 10.0 * i;
    text += fmt::format("{},{},{},{}\n", t, 0.05 + 0.0011 * t, i == 0 ? "0.07" : "", 0.05 + 0.0002 * t);
  }
  Run run = read_run_text("plate.csv", text, load_profile("wide-generic"));
  const Channel& c = run.channels[0];
  BlankOptions o;
  o.strategy = BlankStrategy::matched;
  const int a1 = c.column_of(run.format.index(*parse_well("A1")));
  const int b1 = c.column_of(run.format.index(*parse_well("B1")));
  PlateMap both = parse_plate_map("map.csv", "well,role,match\nA1,sample,x\nB1,blank,x\nB2,blank,x\n");
  BlankResult r = apply_blank(c, both, run.format, o);
  const WellBlank& wb = r.wells[static_cast<std::size_t>(a1)];
  CHECK(wb.blank_wells == "B2");
  CHECK(wb.notes == std::vector<std::string>{"blank-left-out"});
  CHECK(wb.flags.empty());
  CHECK(std::fabs(r.corrected(0, a1)) < 1e-12);
  for (Eigen::Index i = 1; i < 10; ++i)
    CHECK_REL(r.corrected(i, a1), 0.0009 * c.time_s[static_cast<std::size_t>(i)], 1e-9);
  CHECK(r.wells[static_cast<std::size_t>(b1)].flags == std::vector<std::string>{"blank-too-few-reads"});
  PlateMap alone = parse_plate_map("map.csv", "well,role,match\nA1,sample,x\nB1,blank,x\nB2,blank,y\n");
  BlankResult l = apply_blank(c, alone, run.format, o);
  const WellBlank& wl = l.wells[static_cast<std::size_t>(a1)];
  CHECK(wl.flags == std::vector<std::string>{"blank-missing"});
  CHECK(wl.blank_wells.empty());
  for (Eigen::Index i = 0; i < 10; ++i) CHECK(l.corrected(i, a1) == c.values(i, a1));
  // The plate blank: every blank in one set, B1 left out the same way.
  o.strategy = BlankStrategy::plate;
  BlankResult p = apply_blank(c, both, run.format, o);
  CHECK(p.wells[static_cast<std::size_t>(a1)].blank_wells == "B2");
  CHECK(p.wells[static_cast<std::size_t>(a1)].notes == std::vector<std::string>{"blank-left-out"});
}

TEST_CASE("a read a blank lacks is filled by its line, so the set's mean does not step") {
  // Two flat blanks at 0.040 and 0.060 (exact), A1 = 0.05 + 0.001·t, 10 reads 10 s apart;
  // B1's cells at reads 3–5 are empty. Worked here: with B1's line filling them the mean
  // blank is 0.050 at every read and A1 − blank = 0.001·t exactly; the mean of B2 alone
  // there (0.060) would have dented A1 by 0.010 for three reads. An overflow mark is not a
  // lack of a read: B1's "OVER" at read 7 stays unread, and that read's mean is B2's.
  std::string text = "Time [s],A1,B1,B2\n";
  for (int i = 0; i < 10; ++i) {
    const double t = 10.0 * i;
    const std::string b1 = (i >= 3 && i <= 5) ? "" : (i == 7 ? "OVER" : "0.040");
    text += fmt::format("{},{},{},0.060\n", t, 0.05 + 0.001 * t, b1);
  }
  Run run = read_run_text("plate.csv", text, load_profile("wide-generic"));
  const Channel& c = run.channels[0];
  const int a1 = c.column_of(run.format.index(*parse_well("A1")));
  const int b1 = c.column_of(run.format.index(*parse_well("B1")));
  REQUIRE(c.status(7, b1) == ReadStatus::overflow);
  REQUIRE(c.status(4, b1) == ReadStatus::missing);
  PlateMap map = parse_plate_map("map.csv", "well,role\nA1,sample\nB1,blank\nB2,blank\n");
  BlankOptions o;
  o.strategy = BlankStrategy::plate;
  o.mode = BlankMode::trace;
  BlankResult r = apply_blank(c, map, run.format, o);
  for (Eigen::Index i = 0; i < 10; ++i) {
    if (i == 7) continue;
    CHECK(r.blank(i, a1) == doctest::Approx(0.050).epsilon(1e-12));
    CHECK(std::fabs(r.corrected(i, a1) - 0.001 * c.time_s[static_cast<std::size_t>(i)]) < 1e-12);
  }
  CHECK(r.blank(7, a1) == doctest::Approx(0.060).epsilon(1e-12));
  const auto& notes = r.wells[static_cast<std::size_t>(a1)].notes;
  CHECK(std::find(notes.begin(), notes.end(), "blank-filled") != notes.end());
  // Rate mode fits the same filled mean: 0 over the blanks' window.
  CHECK(std::fabs(blank_rate_between(c, map, run.format, o, r, a1, 0, 60)) < 1e-12);
}

// Blanks whose own rates rise with their substrate, and samples that subtract blanks of other
// levels. Constructed exactly: blank B_k at S = 0, 100, 200, 300 µM rises at S·1e-6 AU/s
// (0.05 + S·1e-6·t), samples A1 (S = 0) and A2 (S = 300) add 0.001 AU/s of enzyme to their
// own substrate's background. Worked by hand: the trend is 1e-6 AU/s per µM (the line fits
// exactly, so |t| is unbounded); the plate blank's mean rises at 1.5e-4 AU/s, the trend at
// 0 µM is 0 and at 300 µM 3e-4, so A1 subtracts 1.5e-4 too much and A2 1.5e-4 too little:
// 15 % of their 0.001 AU/s, above the 5 % that flags blank-substrate.
namespace {
std::string trend_plate() {
  std::string t = "Time [s],A1,A2,B1,B2,B3,B4\n";
  for (int i = 0; i < 8; ++i) {
    const double s = 30.0 * i;
    t += fmt::format("{},{:.9g},{:.9g},{:.9g},{:.9g},{:.9g},{:.9g}\n", s, 0.05 + 0.001 * s,
                     0.05 + (0.001 + 3e-4) * s, 0.05, 0.05 + 1e-4 * s, 0.05 + 2e-4 * s, 0.05 + 3e-4 * s);
  }
  return t;
}
const char* k_trend_map =
    "well,role,substrate\nA1,sample,0\nA2,sample,300\nB1,blank,0\nB2,blank,100\nB3,blank,200\nB4,blank,300\n";
}  // namespace

TEST_CASE("blank rates that rise with substrate: the trend, and each sample's mismatch (worked by hand)") {
  Run run = read_run_text("plate.csv", trend_plate(), load_profile("wide-generic"));
  const Channel& c = run.channels[0];
  const auto col = [&](const char* w) { return static_cast<std::size_t>(c.column_of(run.format.index(*parse_well(w)))); };
  BlankOptions o;  // plate blank
  const BlankResult p = apply_blank(c, parse_plate_map("map.csv", k_trend_map), run.format, o);
  CHECK(p.substrate_trend.blanks == 4);
  CHECK(p.substrate_trend.levels == 4);
  CHECK_REL(p.substrate_trend.slope, 1e-6, 1e-9);
  CHECK(p.substrate_trend.significant);
  CHECK(p.substrate_trend.mismatched == 2);
  CHECK_REL(p.wells[col("A1")].substrate_mismatch, -1.5e-4, 1e-9);
  CHECK_REL(p.wells[col("A2")].substrate_mismatch, 1.5e-4, 1e-9);
  // Blanks matched by substrate value (--match-column substrate): each sample subtracts its
  // own level's blank, so nothing is off.
  MapColumnOptions by_substrate;
  by_substrate.match_column = "substrate";
  o.strategy = BlankStrategy::matched;
  const BlankResult m = apply_blank(c, parse_plate_map("map.csv", k_trend_map, by_substrate), run.format, o);
  CHECK(m.wells[col("A2")].blank_wells == "B4");
  CHECK(m.wells[col("A1")].substrate_mismatch == 0);
  CHECK(m.wells[col("A2")].substrate_mismatch == 0);
  CHECK(m.substrate_trend.mismatched == 0);
}

TEST_CASE("a blank trend within the blanks' scatter is not one (t worked by hand)") {
  // Blank rates 1, 3, 2, 5 × 1e-4 AU/s at S = 0, 100, 200, 300: slope 1.1e-6 per µM, residuals
  // −0.1, 0.8, −1.3, 0.6 (× 1e-4), RSS 2.7e-8, SE √(1.35e-8 / 50000) = 5.196e-7, t = 2.117,
  // below t(0.995, 2) = 9.925 (R: qt(0.995, 2)).
  std::string t = "Time [s],A1,B1,B2,B3,B4\n";
  for (int i = 0; i < 8; ++i) {
    const double s = 30.0 * i;
    t += fmt::format("{},{:.9g},{:.9g},{:.9g},{:.9g},{:.9g}\n", s, 0.05 + 0.001 * s, 0.05 + 1e-4 * s,
                     0.05 + 3e-4 * s, 0.05 + 2e-4 * s, 0.05 + 5e-4 * s);
  }
  Run run = read_run_text("plate.csv", t, load_profile("wide-generic"));
  const BlankResult p = apply_blank(run.channels[0], parse_plate_map("map.csv", k_trend_map), run.format, {});
  CHECK_REL(p.substrate_trend.slope, 1.1e-6, 1e-9);
  CHECK_REL(p.substrate_trend.t, 2.1169509, 1e-6);
  CHECK_FALSE(p.substrate_trend.significant);
  CHECK(std::isnan(p.wells[0].substrate_mismatch));
}

TEST_CASE("vzero rates flags blank-substrate and warns; matched by substrate it does neither") {
  test::TempDir dir;
  test::spit(dir / "plate.csv", trend_plate());
  test::spit(dir / "map.csv", k_trend_map);
  const auto plate =
      test::run_vzero("rates plate.csv --layout map.csv --signal-only -o rates.csv --report report.html", dir.path.string());
  INFO(plate.describe());
  REQUIRE(plate.status == 0);
  CHECK(plate.err.find("the blank wells' rates change with their substrate (+6e-05 signal/min per uM") != std::string::npos);
  CHECK(plate.err.find("--blank matched --match-column substrate") != std::string::npos);
  const std::string rates = test::slurp(dir / "rates.csv");
  CHECK(rates.find("A1,A,1,sample,0,") != std::string::npos);
  std::size_t flagged = 0;
  for (std::size_t at = rates.find("blank-substrate"); at != std::string::npos; at = rates.find("blank-substrate", at + 1))
    ++flagged;
  CHECK(flagged == 2);
  // The report says it above the flag table, from datapackage.json's blank_substrate_trend.
  CHECK(test::slurp(dir / "report.html")
            .find("plate.csv, channel signal: the blank wells' rates change with their substrate (4 blanks at 4 "
                  "levels) and 2 wells subtract blanks of other levels") != std::string::npos);
  const auto matched = test::run_vzero(
      "rates plate.csv --layout map.csv --signal-only --blank matched --match-column substrate -o rates.csv",
      dir.path.string());
  INFO(matched.describe());
  REQUIRE(matched.status == 0);
  CHECK(matched.err.empty());
  CHECK(test::slurp(dir / "rates.csv").find("blank-substrate") == std::string::npos);
}

TEST_CASE("the read noise a sample keeps: the blanks' scatter without the bend they share") {
  // Four blanks B1–B4 = 0.05 + 0.001·k + 1e-5·(k + 1)·t + bend(t) ± n(t), with the plate's bend
  // 0.01·(1 − e^(−t/50 s)) and n = ±σ alternating read by read (opposite signs in B3, B4);
  // A1 = 0.05 + 0.001·t + bend(t). Worked here (as in blank_screen_test): each blank's bend is
  // the median of the other three blanks' departures from their lines, and taken off it leaves
  // each blank a line plus 2e (e: the noise less its least-squares line), scatter
  // f = √(Σ(2e)²/18). Subtracting the blanks' reads takes the bend off A1 too, so A1 keeps
  // read noise f (smooth: the blanks enter as line + bend and carry none of their own) or
  // √(f² + 4f²/4²) (trace: the mean of four blanks read as they are carries f²/4). Subtracting
  // only their rate leaves the bend in A1, and the blanks' scatter about straight lines,
  // √((Σ(D + e)² + Σ(D − e)²)/2/18) (D: the bend less its line), stands.
  constexpr double sigma = 0.0005;
  const auto bend = [](double t) { return 0.01 * -std::expm1(-t / 50.0); };
  const auto noise = [&](int i, int k) { return (i % 2 ? -sigma : sigma) * (k >= 2 ? -1 : 1); };
  std::string text = "Time [s],A1,B1,B2,B3,B4\n";
  for (int i = 0; i < 20; ++i) {
    const double t = 10.0 * i;
    text += fmt::format("{},{:.17g}", t, 0.05 + 0.001 * t + bend(t));
    for (int k = 0; k < 4; ++k) text += fmt::format(",{:.17g}", 0.05 + 0.001 * k + 1e-5 * (k + 1) * t + bend(t) + noise(i, k));
    text += "\n";
  }
  double mt = 0, mb = 0, sxx = 0, sxy = 0, sxn = 0;
  for (int i = 0; i < 20; ++i) mt += 10.0 * i / 20, mb += bend(10.0 * i) / 20;
  for (int i = 0; i < 20; ++i) {
    const double t = 10.0 * i;
    sxx += (t - mt) * (t - mt), sxy += (t - mt) * (bend(t) - mb), sxn += (t - mt) * noise(i, 0);
  }
  double see = 0, sdd = 0;
  for (int i = 0; i < 20; ++i) {
    const double t = 10.0 * i;
    const double d = bend(t) - (mb + sxy / sxx * (t - mt)), e = noise(i, 0) - sxn / sxx * (t - mt);
    see += 4 * e * e, sdd += ((d + e) * (d + e) + (d - e) * (d - e)) / 2;
  }
  const double f = std::sqrt(see / 18);
  Run run = read_run_text("plate.csv", text, load_profile("wide-generic"));
  const Channel& c = run.channels[0];
  const PlateMap map =
      parse_plate_map("map.csv", "well,role\nA1,sample\nB1,blank\nB2,blank\nB3,blank\nB4,blank\n");
  const auto a1 = static_cast<std::size_t>(c.column_of(run.format.index(*parse_well("A1"))));
  BlankOptions o;
  o.mode = BlankMode::smooth;
  CHECK_REL(apply_blank(c, map, run.format, o).wells[a1].blank_noise_sd, f, 1e-6);
  o.mode = BlankMode::trace;
  CHECK_REL(apply_blank(c, map, run.format, o).wells[a1].blank_noise_sd, f * std::sqrt(1.25), 1e-6);
  o.mode = BlankMode::rate;
  CHECK_REL(apply_blank(c, map, run.format, o).wells[a1].blank_noise_sd, std::sqrt(sdd / 18), 1e-6);
}
