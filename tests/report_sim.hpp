// An invented plate for the report tests (a simulation, not a measurement): any standard
// format, written as a wide export (wide-generic profile) with its plate map, so the
// report can be exercised on 384- and 1536-well plates.
//
// Scenario (invented): an absorbance read every 20 s for 10 min. Columns 1–2 hold buffer
// blanks; the other columns hold samples whose substrate doubles every four rows from
// 10 µM, with the enzyme level falling along the columns. Product follows
// P(t) = S0·(1 − exp(−k·t)), k = Vmax/(Km + S0) (a first-order approximation of the
// progress curve, enough to give real curvature), plus read noise. Every 37th sample
// carries a bubble spike on read 12; the last well of every 8th row overflows from read 25.
// Random numbers come from std::mt19937_64 (fixed by the C++ standard) through this
// file's own transforms, so the files are the same everywhere.
#pragma once

#include <fmt/format.h>
#include <cmath>
#include <cstdint>
#include <random>
#include <string>

#include "test_support.hpp"
#include "vzero/run.hpp"

namespace vzero::test {

struct SimPlateFiles {
  std::string export_path, map_path;
  int wells = 0, reads = 0;
};

inline SimPlateFiles write_sim_plate(const std::string& dir, PlateFormat f, std::uint64_t seed = 7) {
  std::mt19937_64 engine(seed);
  auto uniform = [&] { return static_cast<double>(engine() >> 11) * 0x1.0p-53; };
  auto normal = [&] {  // Box–Muller
    const double u1 = 1.0 - uniform(), u2 = uniform();
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(6.283185307179586 * u2);
  };
  const int reads = 31;
  const double km_uM = 80, eps_per_uM_cm = 0.018, path_cm = 0.5;  // 18000 M⁻¹·cm⁻¹
  SimPlateFiles out;
  out.wells = f.wells();
  out.reads = reads;
  out.export_path = dir + "/sim_plate.csv";
  out.map_path = dir + "/sim_map.csv";
  std::string map = "# invented plate map for the report tests\nwell,role,substrate,level\n";
  std::vector<double> s0(static_cast<std::size_t>(f.wells())), vmax(s0.size());
  for (int i = 0; i < f.wells(); ++i) {
    const WellId w = f.well(i);
    const bool blank = w.column < 2;
    s0[static_cast<std::size_t>(i)] = 10.0 * std::pow(2.0, (w.row % 16) / 4);
    vmax[static_cast<std::size_t>(i)] = blank ? 0.0 : 0.05 * (1.0 - 0.8 * w.column / std::max(1, f.columns - 1));
    map += fmt::format("{},{},{},{}\n", well_name(w), blank ? "blank" : "sample", s0[static_cast<std::size_t>(i)],
                       blank ? "buffer" : fmt::format("L{}", w.column + 1));
  }
  spit(out.map_path, map);
  std::string csv = "# invented export for the report tests\nChannel: A405\nTime [s]";
  for (int i = 0; i < f.wells(); ++i) csv += "," + well_name(f.well(i));
  csv += "\n";
  for (int r = 0; r < reads; ++r) {
    const double t = 20.0 * r;
    csv += fmt::format("{}", t);
    for (int i = 0; i < f.wells(); ++i) {
      const WellId w = f.well(i);
      const double s = s0[static_cast<std::size_t>(i)], vm = vmax[static_cast<std::size_t>(i)];
      const double k = vm / (km_uM + s);
      const double p_uM = s * -std::expm1(-k * t);
      double a = 0.045 + eps_per_uM_cm * path_cm * p_uM + 0.0008 * normal();
      if (w.column >= 2 && i % 37 == 0 && r == 12) a += 0.08;
      if (w.column == f.columns - 1 && w.row % 8 == 7 && r >= 25) {
        csv += ",OVER";
        continue;
      }
      csv += fmt::format(",{:.4f}", a);
    }
    csv += "\n";
  }
  spit(out.export_path, csv);
  return out;
}

// The part of datapackage.json the report reads, for one unconverted channel of a 96-well
// plate with no plate-map columns (as `vzero rates` writes it; see src/outputs/outputs.cpp).
inline std::string mini_package(const std::string& source, const std::string& channel, const std::string& direction) {
  return fmt::format(
      R"({{"vzero": {{"map_columns": [], "channels": [{{"source": "{}", "channel": "{}", "conversion": "signal-only",
      "v0_unit": "AU/min", "slope_unit": "AU/min", "plate": {{"wells": 96, "rows": 8, "columns": 12}},
      "direction": "{}", "conc_per_signal": 1}}]}}}})",
      source, channel, direction);
}

}  // namespace vzero::test
