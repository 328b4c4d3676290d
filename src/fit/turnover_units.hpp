// kcat and kcat/Km in the units papers print (s⁻¹ or min⁻¹, M⁻¹·s⁻¹ or M⁻¹·min⁻¹), reduced
// from the units the tables give: the rate's (a molar concentration per time, "uM/min"),
// the enzyme column's ("nM" of enzyme_nM) and the substrate's ("uM"). When a unit cannot be
// reduced (a rate in signal per time, an enzyme column without a unit, a mass concentration)
// the composite unit stays, with the reason; never a factor guessed.
//
// **Example**:
//   auto u = vzero::detail::turnover_units("uM/min", "nM", "uM", false);
//   // u.kcat_factor = 1e3/60 (2.395 uM/min per nM = 39.92 1/s), u.kcat_unit = "1/s",
//   // u.efficiency_factor = 1e9/60, u.efficiency_unit = "1/s per M", u.why = ""
#pragma once

#include <optional>
#include <string>
#include <string_view>

#include "vzero/fit.hpp"

namespace vzero::detail {

// Power of ten of a molar concentration unit on M ("M" 0, "mM" −3, "uM"/"µM" −6, "nM" −9,
// "pM" −12, "fM" −15); nullopt for anything else (a signal, ppm, mg_ml).
std::optional<int> molar_pow10(std::string_view unit);
// Seconds in one time unit ("s", "min", "h"); nullopt otherwise.
std::optional<double> seconds_in(std::string_view unit);

struct TurnoverUnits {
  double kcat_factor = 1;        // kcat in kcat_unit = factor × (rate unit per enzyme unit)
  double efficiency_factor = 1;  // kcat/Km in efficiency_unit = factor × (… per substrate unit)
  std::string kcat_unit;         // "1/s", "1/min", or the composite "uM/min per nM"; "" = unknown
  std::string efficiency_unit;   // "1/s per M", or composite ("1/s per ppm"); "" = unknown
  std::string why;               // "" when both are reduced; else the reason, for the console
  std::string kcat_why;          // "" when kcat is reduced; else why not (no "kcat stays" lead)
};

// `rate_unit` "<concentration>/<time>", `enzyme_unit` and `substrate_unit` concentrations;
// an empty unit is one the table does not give. `per_min`: 1/min instead of 1/s.
TurnoverUnits turnover_units(const std::string& rate_unit, const std::string& enzyme_unit,
                             const std::string& substrate_unit, bool per_min);

// The estimate, SE and both intervals times `factor` (> 0): a change of unit is exact.
void scale_estimate(ParameterEstimate& e, double factor);

// kcat and kcat/Km of an ok fit `g` with enzyme level `enzyme` (turnover), in the units `u`
// gives, into g.derived and g.units; a profile interval of kcat/Km open on a side becomes a
// warning of the fit (as the parameters' do).
void add_turnover(GroupFit& g, double enzyme, const TurnoverUnits& u, const FitOptions& options);

}  // namespace vzero::detail
