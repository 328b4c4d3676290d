// A screening campaign simulator with a known truth: 384-well inhibitor-screen plates read
// kinetically (invented for these tests; no instrument, lab or compound produced it).
//
// Each well's product signal is a straight line, baseline + v·t, plus Gaussian read noise:
// v = v_none + (v_full − v_none)·activity/100, times a per-well (pipetting) factor
// 1 + cv·N(0, 1). Columns 1 and 23 hold the full-activity controls (activity 100 %), columns
// 2 and 24 the no-activity controls (no enzyme: v_none, the spontaneous reaction); columns
// 3–22 hold samples. A screen plate's samples are inactive (activity drawn from
// N(100, inactive_sd)) except the planted actives, whose activity is given. A dose–response
// plate holds eight compounds in rows of two, each at ten concentrations (1:3 from
// top_uM) in duplicate columns, with activity 100/(1 + (c/IC50)^hill).
//
// Planted defects, per plate:
//   bad_column      a control column whose wells were dispensed badly: each rate is scaled
//                   by a factor drawn uniformly from [1 − bad_spread, 1 + bad_spread];
//   column_drift    every rate scaled by 1 + column_drift·(column − 1)/23, i.e. rising
//                   linearly across the plate (a temperature gradient), column 1 to 24;
//   enzyme_factor   every enzymatic rate scaled (enzyme losing activity over the day).
//
// Every draw comes from sim::Rng, so a seed gives the same plate everywhere.
//
// **Example**:
//   vzero::sim::ScreenPlate p = vzero::sim::simulate_screen(vzero::sim::ScreenSpec{}, {.seed = 3});
//   vzero::sim::write_screen_wide("p.csv", p, "2026-12-01 09:00");
#pragma once

#include <cmath>
#include <cstdint>
#include <fstream>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "sim_physics.hpp"
#include "vzero/run.hpp"

namespace vzero::sim {

struct ScreenSpec {
  double v_full = 0.020;       // AU/min, uninhibited enzyme
  double v_none = 0.0005;      // AU/min, no enzyme (spontaneous reaction)
  double well_cv = 0.03;       // per-well factor's SD
  double read_noise = 0.0003;  // AU, per read
  double baseline = 0.05;      // AU at t = 0
  double inactive_sd = 3;      // % activity spread of inactive samples
  double interval_s = 30;
  int reads = 21;  // 0 … 10 min
};

struct ScreenPlateSpec {
  std::uint64_t seed = 1;
  std::vector<std::pair<std::string, double>> actives;  // well, true % activity
  int bad_column = 0;                                   // 1-based control column, 0 = none
  double bad_spread = 0.5;
  double column_drift = 0;
  double enzyme_factor = 1;
  bool dose_response = false;
  std::vector<double> ic50_uM = {0.02, 0.08, 0.3, 1, 3, 0.5, 0.15, 5};  // per compound (dose plate)
  std::vector<double> hill = {1, 1.2, 0.8, 1, 1.5, 0.9, 1.1, 1.3};
  double top_uM = 100;
};

struct ScreenWell {
  WellId id;
  std::string role;                // sample, full-activity, no-activity
  std::string compound;            // "" for controls
  double conc_uM = NAN;            // dose plate: the compound's concentration
  double true_activity_pct = NAN;  // samples: the planted activity (before the pipetting factor)
  double v_per_min = 0;            // the well's true rate, AU/min
};

struct ScreenPlate {
  std::vector<ScreenWell> wells;  // row-major, 384
  std::vector<double> time_s;
  std::vector<std::vector<double>> signal;  // [well][read]
};

namespace detail {

inline std::string role_of_column(int col) {  // col 1-based
  if (col == 1 || col == 23) return "full-activity";
  if (col == 2 || col == 24) return "no-activity";
  return "sample";
}

// Planted activity and compound of a sample well.
inline void sample_truth(const ScreenPlateSpec& p, Rng& rng, const ScreenSpec& s, ScreenWell& w) {
  const int col = w.id.column + 1;
  if (p.dose_response) {
    const std::size_t compound = static_cast<std::size_t>(w.id.row / 2);
    const int level = (col - 3) / 2;  // 0 = top concentration
    w.compound = fmt::format("CPD-DR{}", compound + 1);
    w.conc_uM = p.top_uM / std::pow(3.0, level);
    w.true_activity_pct = 100 / (1 + std::pow(w.conc_uM / p.ic50_uM[compound], p.hill[compound]));
    return;
  }
  w.compound = "CPD-" + well_name(w.id);
  w.true_activity_pct = 100 + s.inactive_sd * rng.normal();
  for (const auto& [name, pct] : p.actives)
    if (name == well_name(w.id)) w.true_activity_pct = pct;
}

}  // namespace detail

inline ScreenPlate simulate_screen(const ScreenSpec& s, const ScreenPlateSpec& p) {
  Rng rng(p.seed);
  ScreenPlate plate;
  for (int i = 0; i < s.reads; ++i) plate.time_s.push_back(s.interval_s * i);
  for (int r = 0; r < 16; ++r)
    for (int c = 0; c < 24; ++c) {
      ScreenWell w;
      w.id = WellId{r, c};
      w.role = detail::role_of_column(c + 1);
      double activity = w.role == "full-activity" ? 100 : 0;
      if (w.role == "sample") {
        detail::sample_truth(p, rng, s, w);
        activity = w.true_activity_pct;
      }
      double v = s.v_none + (s.v_full - s.v_none) * p.enzyme_factor * activity / 100;
      v *= 1 + s.well_cv * rng.normal();
      if (c + 1 == p.bad_column) v *= rng.uniform(1 - p.bad_spread, 1 + p.bad_spread);
      v *= 1 + p.column_drift * c / 23.0;
      w.v_per_min = v;
      std::vector<double> y;
      for (double t : plate.time_s) y.push_back(s.baseline + v * t / 60 + s.read_noise * rng.normal());
      plate.wells.push_back(std::move(w));
      plate.signal.push_back(std::move(y));
    }
  return plate;
}

// A wide export the built-in wide profile reads: metadata lines, then "Time [s]" and a
// column per well. `started` ("YYYY-MM-DD HH:MM") is written as the run's start when given.
inline void write_screen_wide(const std::string& path, const ScreenPlate& p, const std::string& started = "") {
  std::ofstream f(path, std::ios::binary);
  f << "# simulated screen plate (invented, tests/sim/screen_sim.hpp)\n";
  if (!started.empty()) f << "Run started: " << started << "\n";
  f << "\nChannel: A405\nTime [s]";
  for (const auto& w : p.wells) f << ',' << well_name(w.id);
  f << '\n';
  for (std::size_t i = 0; i < p.time_s.size(); ++i) {
    f << fmt::format("{:g}", p.time_s[i]);
    for (const auto& y : p.signal) f << fmt::format(",{:.5f}", y[i]);
    f << '\n';
  }
}

// The plate map: well, role, compound (and conc_uM on a dose–response plate).
inline void write_screen_map(const std::string& path, const ScreenPlate& p, bool dose_response) {
  std::ofstream f(path, std::ios::binary);
  f << "# simulated screen plate map (invented)\nwell,role,compound" << (dose_response ? ",conc_uM" : "") << '\n';
  for (const auto& w : p.wells) {
    f << well_name(w.id) << ',' << w.role << ',' << w.compound;
    if (dose_response) f << ',' << (std::isfinite(w.conc_uM) ? fmt::format("{:.6g}", w.conc_uM) : "");
    f << '\n';
  }
}

}  // namespace vzero::sim
