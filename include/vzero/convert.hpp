// Signal to concentration.
//
// - Absorbance, Beer–Lambert: c = A / (ε·l), ε in M⁻¹·cm⁻¹, l in cm. The path length is
//   fixed (`path_cm`), or the height of liquid in a flat-bottomed cylindrical well,
//   l = V / (π r²) with V the fill volume and r the well radius (the meniscus is ignored),
//   or measured per well from the water peak: l = (A977 − A900) / k, k = 0.18 AU per cm at
//   room temperature by default (common practice; set `water_k_per_cm` for your buffer and
//   temperature).
// - Fluorescence: a linear standard curve signal = a + b·c fitted over `standard` wells of
//   the channel (known `standard_conc`); a rate in signal/min divided by b is a rate in
//   concentration/min.
// - Signal only: no conversion.
// Every path is one factor per well, "concentration per signal unit", so rates convert by
// a multiplication and traces by the same factor.
//
// **Example**:
//   vzero::ConvertOptions opt;  opt.epsilon_per_m_cm = 6220;  opt.path_cm = 0.5;
//   vzero::Conversion cv = vzero::plan_conversion(run, run.channels[0], map, opt);
//   // cv.factor[col] == 1e6 / (6220 · 0.5) µM per AU
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/blank.hpp"
#include "vzero/plate_map.hpp"
#include "vzero/run.hpp"

namespace vzero {

enum class ConvertMode { signal_only, beer_lambert, standard_curve };
std::string_view to_string(ConvertMode m);

// A published molar absorption coefficient, with its source.
struct EpsilonPreset {
  const char* name;
  double epsilon_per_m_cm;
  const char* wavelength;
  const char* source;
};
const std::vector<EpsilonPreset>& epsilon_presets();

struct ConvertOptions {
  ConvertMode mode = ConvertMode::signal_only;
  double epsilon_per_m_cm = NAN;  // molar absorption coefficient, M⁻¹·cm⁻¹
  double path_cm = NAN;           // fixed path length
  double volume_ul = NAN;         // fill volume, with well_diameter_mm: cylinder path
  double well_diameter_mm = NAN;
  bool water_peak = false;          // per-well path from two water-band channels
  std::string water_high = "A977";  // channel near 977 nm
  std::string water_low = "A900";   // channel near 900 nm
  double water_k_per_cm = 0.18;     // (A977 − A900) of water per cm of path
  std::string conc_unit = "uM";     // "M", "mM", "uM" or "nM"
  int standard_read = -1;           // read (0-based) used for the standard curve; -1 = mean of ok reads
};

struct StandardCurve {
  std::string channel;
  double slope = NAN, slope_se = NAN;          // signal per concentration unit
  double intercept = NAN, intercept_se = NAN;  // signal
  double r2 = NAN, residual_sd = NAN;
  double lod = NAN;  // limit of detection, concentration: 3·sd(zero standards) / slope, or 3·SE(intercept) / slope
  std::string lod_basis;                  // "zero-standards" or "intercept"
  double conc_min = NAN, conc_max = NAN;  // calibrated range
  double signal_min = NAN, signal_max = NAN;
  int n = 0;
  std::vector<std::pair<double, double>> points;  // (conc, signal) used
};

struct Conversion {
  ConvertMode mode = ConvertMode::signal_only;
  std::string conc_unit;        // "" for signal only
  std::vector<double> factor;   // per channel column: concentration per signal unit (1 for signal only)
  std::vector<double> path_cm;  // per channel column; NaN unless Beer–Lambert
  std::optional<StandardCurve> curve;
  std::string path_source;  // "fixed", "cylinder", "water-peak" or ""
  std::string formula;      // the conversion in words, for provenance
};

// Plans the conversion for one channel (options checked beforehand: check_analysis_options).
// Throws InputError for missing water channels, no standard wells, fewer than 2 distinct
// standard concentrations, or standards that do not rise.
Conversion plan_conversion(const Run& run, const Channel& channel, const PlateMap& map, const ConvertOptions& options);

// Fits signal = a + b·c (OLS) to the points; throws InputError when fewer than 3 points or
// 2 distinct concentrations, or when b ≤ 0.
StandardCurve fit_standard_curve(const std::vector<std::pair<double, double>>& conc_signal, const std::string& where);

// Concentration of one unit of `unit` in mol/L ("uM" → 1e-6).
double molar_per_unit(std::string_view unit);

// F_corrected = F_observed · 10^((A_ex + A_em)/2) (Lakowicz, Principles of Fluorescence
// Spectroscopy, 3rd ed., ch. 2): inner-filter correction from the absorbances at the
// excitation and emission wavelengths.
double inner_filter_corrected(double f_observed, double a_ex, double a_em);

// Enzyme activity in U (µmol/min) of a rate `v_per_min` in `conc_unit`/min in `volume_ul`.
double activity_units(double v_per_min, std::string_view conc_unit, double volume_ul);
// 1 U = 1 µmol/min = (1e-6/60) mol/s = 16.667 nkat (SI katal, 1 kat = 1 mol/s).
constexpr double k_nkat_per_unit = 1000.0 / 60.0;

}  // namespace vzero
