// Internals of the kinetics fit: the points being fitted, parameter bounds, starting values,
// the Levenberg–Marquardt solver and the profile-t intervals.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "vzero/fit.hpp"
#include "vzero/kinetic_model.hpp"

namespace vzero::detail {

// Points of one fit. `i` is all zero for single-substrate models; sqrt_w = √weight.
struct FitPoints {
  std::vector<double> s, i, v, w, sqrt_w;
  std::size_t size() const { return v.size(); }
};

// Per parameter: the value FitOptions::fixed holds it at, NaN when it is fitted; UsageError
// for a name the model lacks, a value its scale cannot take, or a start <= 0 on the log scale.
std::vector<double> held_values(const KineticModel& m, const FitOptions& options);

using Bounds = ParameterBox;
// The data ranges of these points, and the model's search box over them.
DataScale data_scale(const FitPoints& pts);
// The points of a fit, checked (equal lengths, finite concentrations >= 0, finite rates,
// weights > 0); `fn` names the caller in the UsageError.
FitPoints make_points(std::string_view fn, const std::vector<double>& s, const std::vector<double>* inh,
                      const std::vector<double>& v, const std::vector<double>& w);
Bounds parameter_bounds(const KineticModel& m, const FitPoints& pts);

struct Start {
  std::string method;     // "Hanes-Woolf", "Hill plot", "grid", "given"
  std::vector<double> p;  // natural scale
};
// Candidate starts: the model's linearisation (when it gives positive values), then the best
// point of a coarse grid over the nonlinear parameters with Vmax solved by linear least squares.
// A model with its own `start` rule gets that alone; `fixed` holds the fixed parameters'
// values (NaN = free), which every start keeps.
std::vector<Start> automatic_starts(const KineticModel& m, const FitPoints& pts, const std::vector<double>& fixed);

// Σ wᵢ (vᵢ − f)², and the per-point model rates when `fitted` is given.
double weighted_rss(const KineticModel& m, const FitPoints& pts, const std::vector<double>& p,
                    std::vector<double>* fitted = nullptr);

struct LmResult {
  std::vector<double> p;  // natural scale
  double rss = NAN;
  int iterations = 0;
  bool converged = false;
  double relative_offset = NAN;
  std::vector<int> at_bound;  // per parameter: -1 lower bound, +1 upper bound, 0 inside
};

struct LmSettings {
  int max_iterations = 200;
  double tolerance = 1e-10;
};

// Levenberg–Marquardt on θ = ln p inside [ln lo, ln hi] (steps are projected onto the box).
// Parameters with fixed[j] stay at start[j]. Converged when the relative offset of the free
// parameters falls below tolerance, the residuals vanish, or the step no longer moves θ.
LmResult levenberg_marquardt(const KineticModel& m, const FitPoints& pts, const Bounds& bounds,
                             std::vector<double> start, const std::vector<bool>& fixed, const LmSettings& settings);

// Weighted Jacobian √wᵢ·∂f/∂p on the natural scale (n × p).
Eigen::MatrixXd natural_jacobian(const KineticModel& m, const FitPoints& pts, const std::vector<double>& p);

// Profile-t limits for parameter j (as MASS's profile/confint for nls): the values c where
// τ(c) = sign(c − p̂ⱼ)·√(RSSⱼ(c) − RSS)/s equals ∓cutoff, RSSⱼ(c) the RSS minimised over the
// other parameters with pⱼ = c. NaN on a side where the profile stays below the cutoff
// inside the bounds. `held`: parameters fixed in the fit itself (empty = none), which stay.
struct ProfileLimits {
  double low = NAN, high = NAN;
};
ProfileLimits profile_limits(const KineticModel& m, const FitPoints& pts, const Bounds& bounds, const LmResult& best,
                             std::size_t j, double se_j, double residual_sd, double cutoff, const LmSettings& settings,
                             const std::vector<bool>& held = {});

// The model in θ = (Vmax/K, K, p₂, …), K its substrate constant (parameter 1): the rate
// f(q₀·q₁, q₁, q₂, …), gradient by the chain rule. Made once per model and kept (never
// registered: no --model word); e.g. Michaelis–Menten as v = (Vmax/Km)·S/(1 + S/Km).
const KineticModel& specificity_form(const KineticModel& m);

// `fit` (ok, not dose-response) refitted in specificity_form from its optimum over the same
// points and FitOptions (held parameters stay held), and the profile-t limits of Vmax/K from
// profile_limits, `se` (the delta-method SE of Vmax/K) setting its first step. With Vmax
// held, Vmax/K's limits are K's mapped; an exact fit has zero width; options.profile false
// leaves them NaN.
struct SpecificityFit {
  double estimate = NAN;  // Vmax/K at the refitted optimum: V̂/K̂ to rounding
  double rss = NAN;
  bool converged = false;
  ProfileLimits profile;
};
SpecificityFit specificity_fit(const FitResult& fit, const FitPoints& pts, double se, const FitOptions& options);

}  // namespace vzero::detail
