// Internals of the kinetics fit: the points being fitted, parameter bounds, starting values,
// the Levenberg–Marquardt solver and the profile-t intervals.
#pragma once

#include <string>
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

}  // namespace vzero::detail
