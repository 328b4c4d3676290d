// A kinetic model as one object: its name, rate law, parameters with their unit roles, the
// rate and its gradient, an optional linearisation for starting values, and how each
// parameter's search box and start grid follow from the data. The fit, the table fit, the
// outputs, the CLI and the report ask the object; none of them lists the models.
//
// The built-in models (src/fit/kinetic_models.cpp): mm, substrate-inhibition, hill,
// competitive, uncompetitive, mixed. Another one is added by one object:
//
// **Example**:
//   vzero::KineticModel m;
//   m.name = "my-model";  m.formula = "v = ...";  m.parameters = {{"Vmax", UnitRole::rate, "..."}, ...};
//   m.rate = [](std::span<const double> p, double s, double i, std::span<double> g) { ... };
//   const vzero::KineticModel& added = vzero::register_kinetic_model(std::move(m));
//   vzero::fit_model(s, v, {}, added);  // and `vzero fit --model my-model` in a program that registered it
//
// Contract of a model (register_kinetic_model checks what it can): parameter 0 is the
// limiting rate (unit role rate) and the rate is proportional to it (the start grid solves it
// by linear least squares); parameter 1 is the substrate constant (unit role substrate: Km,
// K_half; kcat/Km divides by it); every parameter is > 0 (the fit works on ln p); v = 0 at
// S = 0 for any parameters.
//
// A dose-response model (`dose_response`, src/fit/dose_response.cpp: 4pl, morrison) is the
// exception: x is the inhibitor concentration, y the rate or % activity, y at x = 0 is the
// uninhibited level; it gives its own `start` rule, its parameters take any order and unit
// roles (substrate = the x column's unit), an `any_sign` parameter is fitted on its own
// scale, and a `known` one (Morrison's [E]) is never fitted: FitOptions::fixed or the
// table's enzyme column gives it. No kcat is derived from it.
#pragma once

#include <cmath>
#include <functional>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace vzero {

// Which data unit a parameter carries: the rate column's (Vmax), the substrate column's (Km),
// the inhibitor column's (Kic), or none (a pure number such as the Hill coefficient).
enum class UnitRole { rate, substrate, inhibitor, none };
std::string_view to_string(UnitRole role);  // "rate", "substrate", "inhibitor", "none"

struct KineticParameter {
  std::string name;  // as in the formula and the outputs, e.g. "Km"
  UnitRole unit_role = UnitRole::none;
  std::string meaning;  // one line, e.g. "substrate concentration at half Vmax"
  // Unit role none only (there is no data scale to follow): the search box and the values the
  // start grid tries. The other roles take both from the data (see parameter_bounds).
  double lo = NAN, hi = NAN;
  std::vector<double> grid;
  // The failure message when this parameter runs off to its upper bound, in the data's terms;
  // "" = the generic "runs to its upper search bound" (parameters 0 and 1 have their own).
  std::string runaway;
  // Fitted on its own scale, so it may be <= 0 (a curve's bottom); unit role rate only: its
  // search box is [-v_max*1e6, v_max*1e6]. Default: fitted on ln p (> 0).
  bool any_sign = false;
  // A known quantity, never fitted (Morrison's [E]): FitOptions::fixed must give it.
  bool known = false;
};

// v at substrate s and inhibitor i for natural-scale parameters p (parameter order). When
// `gradient` is not empty (same size as p) it receives ∂v/∂p, analytic.
using RateLaw = std::function<double(std::span<const double> p, double s, double i, std::span<double> gradient)>;

// A straight-line form of the rate law, for starting values only (never the estimate): each
// point with S > 0 and v > 0 gives a response y and a design row x (`columns` long; put the
// constant 1 in it when the line has an intercept); ordinary least squares y ≈ x·b; then
// `parameters` maps b back. Starts that are not all finite and > 0 are dropped.
struct Linearisation {
  std::string method;  // named in the outputs' start_method, e.g. "Hanes-Woolf"
  int columns = 0;
  // `v_ceiling` is an upper estimate of Vmax from the data: the larger of 1.1 × the largest
  // rate and the Hanes–Woolf Vmax (S/v on S). Return false to leave the point out.
  std::function<bool(double s, double i, double v, double v_ceiling, std::span<double> x, double& y)> row;
  std::function<std::vector<double>(std::span<const double> b, double v_ceiling)> parameters;
};

struct KineticModel {
  std::string name;                  // the CLI word: vzero fit --model NAME; unique
  std::vector<std::string> aliases;  // other accepted spellings, e.g. "michaelis-menten"
  std::string description;           // one line for --help and the outputs
  std::string formula;               // e.g. "v = Vmax*S/(Km + S)" (S substrate, I inhibitor)
  std::vector<KineticParameter> parameters;
  RateLaw rate;
  std::optional<Linearisation> linearisation;
  // v tends to a finite positive limit as S → ∞ (false for substrate inhibition, where it
  // falls to 0); the report's double-reciprocal curve reaches 1/S = 0 only when true.
  bool saturates = true;
  // See the header comment: x is the inhibitor concentration; the contract's rules on
  // parameters 0 and 1 and v(0) = 0 do not apply.
  bool dose_response = false;
  // Starting values for a model the linearisation and the Vmax grid cannot serve: x, y and
  // weights of the points; `p` arrives with the fixed parameters' values and NaN for the
  // free ones, which the rule fills. False when it finds none. `start_method` names it.
  std::function<bool(std::span<const double> x, std::span<const double> y, std::span<const double> w,
                     std::vector<double>& p)>
      start;
  std::string start_method;

  // True when a parameter carries the inhibitor's unit: the fit needs inhibitor levels.
  bool needs_inhibitor() const;
  std::vector<std::string> parameter_names() const;
  // Distinct positive substrate levels the fit needs: one per parameter that S alone
  // carries (every parameter but the inhibitor constants).
  std::size_t substrate_levels_needed() const;
};

// The registered models, built-in ones first, in registration order (the order of --help,
// of --model all and of the default outputs).
std::vector<const KineticModel*> kinetic_models();
// The model called `name` (or one of its aliases; ASCII case-insensitive), or nullptr.
const KineticModel* find_model(std::string_view name);
// The same, or UsageError naming the known models.
const KineticModel& kinetic_model(std::string_view name);
// Adds `model` to the registry and returns it (its address stays valid for the program's
// life). UsageError when the name is empty, taken or "all", or the object breaks the
// contract above (a missing rate, parameter 0 not a rate, parameter 1 not a substrate
// constant, a unitless parameter without a box and grid, a linearisation without columns).
// Register before fitting: lookups and registration share a lock, the models never move.
const KineticModel& register_kinetic_model(KineticModel model);

// The data ranges the search boxes and start grids follow: largest rate, smallest and largest
// positive substrate and inhibitor concentrations (1 when there is none).
struct DataScale {
  double v_max = 0, s_min = 1, s_max = 0, i_min = 1, i_max = 0;
};
// Search box per parameter, wide enough never to bind a real optimum: rate [v_max/1e6,
// v_max·1e6], substrate [s_min/1e6, s_max·1e6], inhibitor [i_min/1e6, i_max·1e6], none the
// parameter's own [lo, hi].
struct ParameterBox {
  std::vector<double> lo, hi;
};
ParameterBox parameter_bounds(const KineticModel& model, const DataScale& scale);
// Start-grid values for parameters 1.. (Vmax is solved): substrate 9 geometric steps over
// [s_min/10, 10·s_max], inhibitor likewise over [i_min/10, 10·i_max], none its own grid.
std::vector<std::vector<double>> start_grid_axes(const KineticModel& model, const DataScale& scale);

}  // namespace vzero
