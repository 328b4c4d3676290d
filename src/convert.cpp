#include "vzero/convert.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <numbers>
#include <set>

#include "core/stats.hpp"
#include "vzero/error.hpp"

namespace vzero {

std::string_view to_string(ConvertMode m) {
  switch (m) {
    case ConvertMode::signal_only:
      return "signal-only";
    case ConvertMode::beer_lambert:
      return "beer-lambert";
    case ConvertMode::standard_curve:
      return "standard-curve";
  }
  return "signal-only";
}

const std::vector<EpsilonPreset>& epsilon_presets() {
  // Only values in common use (common practice). p-nitrophenolate is deliberately absent: its
  // published ε405 spans ~18,000–18,400 M⁻¹·cm⁻¹ and depends on pH, so the user must give it.
  static const std::vector<EpsilonPreset> presets = {
      {"nadh-340", 6220.0, "340 nm",
       "NADH, 6220 M⁻¹·cm⁻¹ at 340 nm: the value in common use (common practice)"},
      {"nadph-340", 6220.0, "340 nm",
       "NADPH, 6220 M⁻¹·cm⁻¹ at 340 nm: as for NADH (common practice)"},
  };
  return presets;
}

double molar_per_unit(std::string_view u) {
  if (u == "M") return 1.0;
  if (u == "mM") return 1e-3;
  if (u == "uM") return 1e-6;
  if (u == "nM") return 1e-9;
  return NAN;
}

double inner_filter_corrected(double f, double a_ex, double a_em) { return f * std::pow(10.0, (a_ex + a_em) / 2); }

double activity_units(double v_per_min, std::string_view unit, double volume_ul) {
  // v [unit/min] · molar_per_unit [mol/L per unit] · V [L] = mol/min; × 1e6 → µmol/min = U.
  return v_per_min * molar_per_unit(unit) * volume_ul * 1e-6 * 1e6;
}

StandardCurve fit_standard_curve(const std::vector<std::pair<double, double>>& pts, const std::string& where) {
  StandardCurve sc;
  sc.points = pts;
  sc.n = static_cast<int>(pts.size());
  std::set<double> distinct;
  for (const auto& p : pts) distinct.insert(p.first);
  if (pts.size() < 3 || distinct.size() < 2) {
    throw InputError(Where{where},
                     fmt::format("the standard curve needs at least 3 standard wells with 2 or more different "
                                 "concentrations; found {} wells, {} concentrations",
                                 pts.size(), distinct.size()),
                     {"mark standard wells with role = standard and their `standard_conc` in the plate map"});
  }
  std::vector<double> xs, ys;
  for (const auto& [x, y] : pts) {
    xs.push_back(x);
    ys.push_back(y);
  }
  const detail::LineFit line = detail::least_squares_line(xs.data(), ys.data(), sc.n, nullptr, detail::Residual::stepwise);
  sc.slope = line.slope;
  sc.intercept = line.intercept;
  sc.residual_sd = line.resid_sd;
  sc.slope_se = line.slope_se;
  sc.intercept_se = line.intercept_se;
  sc.r2 = line.r2;
  if (!(sc.slope > 0)) {
    throw InputError(Where{where},
                     fmt::format("the standards do not rise with concentration (slope {} signal per unit)", sc.slope),
                     {"check the `standard_conc` values and that the standard wells hold the product"});
  }
  sc.conc_min = INFINITY;
  sc.conc_max = -INFINITY;
  sc.signal_min = INFINITY;
  sc.signal_max = -INFINITY;
  std::vector<double> zeros;
  for (const auto& [x, y] : pts) {
    sc.conc_min = std::min(sc.conc_min, x);
    sc.conc_max = std::max(sc.conc_max, x);
    sc.signal_min = std::min(sc.signal_min, y);
    sc.signal_max = std::max(sc.signal_max, y);
    if (x == 0) zeros.push_back(y);
  }
  if (zeros.size() >= 2) {
    double m = 0;
    for (double z : zeros) m += z;
    m /= static_cast<double>(zeros.size());
    double v = 0;
    for (double z : zeros) v += (z - m) * (z - m);
    sc.lod = 3 * std::sqrt(v / static_cast<double>(zeros.size() - 1)) / sc.slope;
    sc.lod_basis = "zero-standards";
  } else {
    sc.lod = 3 * sc.intercept_se / sc.slope;
    sc.lod_basis = "intercept";
  }
  return sc;
}

namespace {

// Mean of the ok reads of one channel column, or one chosen read.
double well_level(const Channel& c, int col, int read) {
  if (read >= 0) {
    if (read >= c.reads() || c.status(read, col) != ReadStatus::ok) return NAN;
    return c.values(read, col);
  }
  double s = 0;
  int n = 0;
  for (int i = 0; i < c.reads(); ++i)
    if (c.status(i, col) == ReadStatus::ok) {
      s += c.values(i, col);
      ++n;
    }
  return n ? s / n : NAN;
}

}  // namespace

Conversion plan_conversion(const Run& run, const Channel& c, const PlateMap& map, const ConvertOptions& o) {
  Conversion cv;
  cv.mode = o.mode;
  const std::size_t cols = c.wells.size();
  cv.factor.assign(cols, 1.0);
  cv.path_cm.assign(cols, NAN);
  if (o.mode == ConvertMode::signal_only) {
    cv.formula = "no conversion: rates in signal units per minute";
    return cv;
  }
  cv.conc_unit = o.conc_unit;
  const double per_unit = molar_per_unit(o.conc_unit);
  if (o.mode == ConvertMode::beer_lambert) {
    // Beer–Lambert relates absorbance to concentration; an emission signal has no ε.
    if (c.quantity == Quantity::fluorescence || c.quantity == Quantity::luminescence) {
      std::string others;
      for (const auto& ch : run.channels)
        if (ch.quantity == Quantity::absorbance) others += (others.empty() ? "" : ",") + ch.name;
      std::vector<std::string> fixes{
          fmt::format("convert {} with a standard curve (--standards, standard wells in the plate map) or keep "
                      "signal units (--signal-only)",
                      to_string(c.quantity))};
      if (!others.empty())
        fixes.push_back(fmt::format("to convert only the absorbance channels, give --channel {}", others));
      fixes.emplace_back(
          "if the channel is in fact absorbance, set `signal.quantity = \"absorbance\"` (or a section's "
          "`quantity`) in the profile");
      throw InputError(Where{run.source},
                       fmt::format("--epsilon converts absorbance by Beer–Lambert, but channel {} is {} ({})", c.name,
                                   to_string(c.quantity), c.unit.empty() ? "no unit" : c.unit),
                       std::move(fixes));
    }
    if (!std::isnan(o.path_cm)) {
      cv.path_cm.assign(cols, o.path_cm);
      cv.path_source = "fixed";
    } else if (!std::isnan(o.volume_ul)) {
      // Height of a liquid cylinder: V / (π r²); 1 µL = 1 mm³, so mm → cm by / 10.
      double r_mm = o.well_diameter_mm / 2;
      double l_cm = o.volume_ul / (std::numbers::pi * r_mm * r_mm) / 10;
      cv.path_cm.assign(cols, l_cm);
      cv.path_source = "cylinder";
    } else {
      const Channel* hi = run.find_channel(o.water_high);
      const Channel* lo = run.find_channel(o.water_low);
      if (!hi || !lo) {
        std::string names;
        for (const auto& ch : run.channels) names += (names.empty() ? "" : ", ") + ch.name;
        throw InputError(Where{run.source},
                         fmt::format("the water-peak path length needs channels {} and {}; the file has: {}",
                                     o.water_high, o.water_low, names),
                         {"name the water channels with --water-high and --water-low, or give --path-cm"});
      }
      cv.path_source = "water-peak";
      for (std::size_t j = 0; j < cols; ++j) {
        int plate_index = c.wells[j];
        int ch = hi->column_of(plate_index), cl = lo->column_of(plate_index);
        double a_hi = ch >= 0 ? well_level(*hi, ch, -1) : NAN;
        double a_lo = cl >= 0 ? well_level(*lo, cl, -1) : NAN;
        double l = (a_hi - a_lo) / o.water_k_per_cm;
        cv.path_cm[j] = l > 0 ? l : NAN;
      }
    }
    for (std::size_t j = 0; j < cols; ++j) cv.factor[j] = 1.0 / (o.epsilon_per_m_cm * cv.path_cm[j]) / per_unit;
    cv.formula = fmt::format("c = A / (ε·l), ε = {} M⁻¹·cm⁻¹, l {} cm; in {}", o.epsilon_per_m_cm,
                             cv.path_source == "water-peak"
                                 ? fmt::format("= ({} − {}) / {} per well", o.water_high, o.water_low, o.water_k_per_cm)
                                 : "= " + fmt::format("{:.6g}", cv.path_cm.empty() ? NAN : cv.path_cm[0]),
                             o.conc_unit);
    // An inference, so said where the formula is recorded (datapackage.json, the report).
    if (c.quantity == Quantity::other)
      cv.formula += fmt::format("; channel {} states no quantity: its signal is taken as absorbance", c.name);
    return cv;
  }
  // Standard curve from this channel's standard wells.
  std::vector<std::pair<double, double>> pts;
  for (std::size_t j = 0; j < cols; ++j) {
    const WellInfo* info = map.find(run.format.well(c.wells[j]));
    if (!info || info->role != Role::standard) continue;
    double level = well_level(c, static_cast<int>(j), o.standard_read);
    if (!std::isnan(level)) pts.emplace_back(info->standard_conc, level);
  }
  StandardCurve sc = fit_standard_curve(pts, map.source);
  sc.channel = c.name;
  cv.factor.assign(cols, 1.0 / sc.slope);
  cv.formula = fmt::format("c = signal / b, b = {:.6g} {} per {} (standard curve over {} wells, r² = {:.6f})", sc.slope,
                           c.unit.empty() ? "signal" : c.unit, o.conc_unit, sc.n, sc.r2);
  cv.curve = std::move(sc);
  return cv;
}

}  // namespace vzero
