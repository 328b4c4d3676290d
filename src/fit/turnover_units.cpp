// Unit reduction of kcat and kcat/Km (turnover_units.hpp).
#include "fit/turnover_units.hpp"

#include <fmt/format.h>
#include <cmath>

namespace vzero::detail {

std::optional<int> molar_pow10(std::string_view unit) {
  if (unit == "M") return 0;
  if (unit == "mM") return -3;
  if (unit == "uM" || unit == "\u00b5M") return -6;
  if (unit == "nM") return -9;
  if (unit == "pM") return -12;
  if (unit == "fM") return -15;
  return std::nullopt;
}

std::optional<double> seconds_in(std::string_view unit) {
  if (unit == "s") return 1.0;
  if (unit == "min") return 60.0;
  if (unit == "h") return 3600.0;
  return std::nullopt;
}

namespace {

std::string per(const std::string& a, const std::string& b) { return a.empty() || b.empty() ? "" : a + " per " + b; }

// Why kcat (rate per enzyme) cannot become a reciprocal time, or "".
std::string kcat_problem(const std::string& rate_unit, const std::string& enzyme_unit) {
  const std::size_t slash = rate_unit.rfind('/');
  if (rate_unit.empty()) return "the rate column gives no unit";
  if (slash == std::string::npos || !molar_pow10(rate_unit.substr(0, slash)) ||
      !seconds_in(rate_unit.substr(slash + 1)))
    return fmt::format(
        "the rate unit {} is not a molar concentration per time (convert the signal to a concentration in "
        "vzero rates)",
        rate_unit);
  if (enzyme_unit.empty())
    return "the enzyme column gives no unit (name it with its unit, e.g. enzyme_nM, or give an enzyme_unit column)";
  if (!molar_pow10(enzyme_unit))
    return fmt::format("the enzyme unit {} is not molar (M, mM, uM, nM, pM or fM)", enzyme_unit);
  return {};
}

}  // namespace

TurnoverUnits turnover_units(const std::string& rate_unit, const std::string& enzyme_unit,
                             const std::string& substrate_unit, bool per_min) {
  TurnoverUnits u;
  u.kcat_why = kcat_problem(rate_unit, enzyme_unit);
  if (!u.kcat_why.empty()) {
    u.kcat_unit = per(rate_unit, enzyme_unit);
    u.efficiency_unit = per(u.kcat_unit, substrate_unit);
    u.why = fmt::format("kcat and kcat/Km stay in {}: {}", u.kcat_unit.empty() ? "the table's units" : u.kcat_unit,
                        u.kcat_why);
    return u;
  }
  const std::size_t slash = rate_unit.rfind('/');
  const int rate_pow10 = *molar_pow10(rate_unit.substr(0, slash));
  const double rate_s = *seconds_in(rate_unit.substr(slash + 1));
  // (c_v·10^a / t·T) / (c_e·10^b) = (c_v/c_e)·10^(a−b)/T per second; ×60 per minute.
  u.kcat_factor = std::pow(10.0, rate_pow10 - *molar_pow10(enzyme_unit)) * (per_min ? 60.0 : 1.0) / rate_s;
  u.kcat_unit = per_min ? "1/min" : "1/s";
  const std::optional<int> s_pow10 = molar_pow10(substrate_unit);
  if (!s_pow10) {
    u.efficiency_unit = per(u.kcat_unit, substrate_unit);
    u.efficiency_factor = u.kcat_factor;
    u.why =
        substrate_unit.empty()
            ? "kcat/Km has no unit: the substrate column gives none (name it with its unit, e.g. substrate_uM)"
            : fmt::format("kcat/Km stays in {}: the substrate unit {} is not molar", u.efficiency_unit, substrate_unit);
    return u;
  }
  // Dividing by Km·10^s M: multiply by 10^(−s), an exact power of ten for the usual units.
  u.efficiency_factor = u.kcat_factor * std::pow(10.0, -*s_pow10);
  u.efficiency_unit = u.kcat_unit + " per M";
  return u;
}

void scale_estimate(ParameterEstimate& e, double factor) {
  for (double* x : {&e.estimate, &e.se, &e.ci_low, &e.ci_high, &e.profile_low, &e.profile_high}) *x *= factor;
}

void add_turnover(GroupFit& g, double enzyme, const TurnoverUnits& u, const FitOptions& options) {
  g.derived = turnover(g.result, enzyme, g.s, g.inhibitor, g.v, g.weights, options);
  if (g.derived.size() != 2) return;
  scale_estimate(g.derived[0], u.kcat_factor);
  scale_estimate(g.derived[1], u.efficiency_factor);
  g.units.push_back(u.kcat_unit);
  g.units.push_back(u.efficiency_unit);
  const ParameterEstimate& e = g.derived[1];
  if (!options.profile || !(g.result.residual_sd > 0) || !(e.se > 0)) return;  // held: no interval
  for (const auto& [limit, side] : {std::pair{e.profile_low, "lower"}, std::pair{e.profile_high, "upper"}})
    if (std::isnan(limit))
      g.result.warnings.push_back(
          fmt::format("the profile interval of {} has no {} limit inside the search bounds", e.name, side));
}

}  // namespace vzero::detail
