// kcat and kcat/Km from a fit: kcat = Vmax/[E]; kcat/Km = Vmax/([E]·K) with its profile-t
// interval from the model refitted in a parameterisation that has Vmax/K as a parameter.
#include <fmt/format.h>
#include <algorithm>
#include <cassert>
#include <cmath>
#include <map>
#include <memory>
#include <mutex>

#include "fit/fit_models.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"

namespace vzero {

namespace detail {

const KineticModel& specificity_form(const KineticModel& m) {
  static std::mutex lock;
  static std::map<const KineticModel*, std::unique_ptr<KineticModel>> made;  // registered models never move
  const std::lock_guard<std::mutex> hold(lock);
  std::unique_ptr<KineticModel>& slot = made[&m];
  if (slot) return *slot;
  auto w = std::make_unique<KineticModel>();
  const std::string k_name = m.parameters[1].name;
  w->name = m.name + " in Vmax/" + k_name;
  w->formula = m.formula + " with Vmax = (Vmax/" + k_name + ")*" + k_name;
  w->parameters = m.parameters;
  w->parameters[0].name = "Vmax/" + k_name;
  w->parameters[0].meaning = "limiting rate over the substrate constant: the slope of v at S -> 0";
  w->saturates = m.saturates;
  // v(q) = f(q₀·q₁, q₁, q₂, …): ∂v/∂q₀ = q₁·∂f/∂p₀, ∂v/∂q₁ = q₀·∂f/∂p₀ + ∂f/∂p₁ (chain rule).
  w->rate = [base = &m](std::span<const double> q, double s, double i, std::span<double> g) {
    std::vector<double> p(q.begin(), q.end());
    p[0] = q[0] * q[1];
    const double v = base->rate(p, s, i, g);
    if (!g.empty()) {
      const double g0 = g[0];
      g[0] = g0 * q[1];
      g[1] += g0 * q[0];
    }
    return v;
  };
  slot = std::move(w);
  return *slot;
}

SpecificityFit specificity_fit(const FitResult& fit, const FitPoints& pts, double se, const FitOptions& options) {
  assert(fit.ok && fit.model && fit.parameters.size() >= 2);
  const KineticModel& m = *fit.model;
  const std::vector<double> held = held_values(m, options);
  std::vector<bool> fixed(held.size());
  for (std::size_t j = 0; j < held.size(); ++j) fixed[j] = !std::isnan(held[j]);
  SpecificityFit out;
  const double vmax = fit.parameters[0].estimate, k = fit.parameters[1].estimate;
  if (fixed[0]) {
    // Vmax held: Vmax/K falls as K rises, so its profile is K's mapped (the profile is the
    // same whatever the parameterisation).
    out.estimate = vmax / k;
    out.rss = fit.rss;
    out.converged = true;
    out.profile = {vmax / fit.parameters[1].profile_high, vmax / fit.parameters[1].profile_low};
    return out;
  }
  const KineticModel& w = specificity_form(m);
  Bounds box = parameter_bounds(m, pts);
  box.lo[0] = box.lo[0] / box.hi[1];
  box.hi[0] = box.hi[0] / box.lo[1];
  std::vector<double> q;
  for (const auto& e : fit.parameters) q.push_back(e.estimate);
  q[0] = vmax / k;
  const LmSettings settings{options.max_iterations, options.tolerance};
  const LmResult best = levenberg_marquardt(w, pts, box, q, fixed, settings);
  out.estimate = best.p[0];
  out.rss = best.rss;
  out.converged = best.converged;
  if (!(fit.residual_sd > 0)) {
    out.profile = {out.estimate, out.estimate};  // an exact fit: no interval width
  } else if (options.profile) {
    out.profile = profile_limits(w, pts, box, best, 0, se, fit.residual_sd, fit.t_quantile, settings, fixed);
  }
  return out;
}

}  // namespace detail

std::vector<ParameterEstimate> turnover(const FitResult& fit, double enzyme_conc, const std::vector<double>& s,
                                        const std::vector<double>& inhibitor, const std::vector<double>& v,
                                        const std::vector<double>& weights, const FitOptions& options) {
  if (!fit.ok || !fit.model || fit.parameters.size() < 2) return {};
  if (!(enzyme_conc > 0) || !std::isfinite(enzyme_conc))
    throw UsageError(fmt::format("turnover: enzyme concentration is {}; it must be > 0", enzyme_conc));
  if (s.size() != v.size() || (!inhibitor.empty() && inhibitor.size() != v.size()) ||
      (!weights.empty() && weights.size() != v.size()) || static_cast<int>(v.size()) != fit.n)
    throw UsageError(fmt::format("turnover: s, inhibitor, v and weights must be the {} points fitted (s {}, v {})",
                                 fit.n, s.size(), v.size()));
  detail::FitPoints pts;
  pts.s = s;
  pts.v = v;
  pts.i = inhibitor.empty() ? std::vector<double>(v.size(), 0.0) : inhibitor;
  pts.w = weights.empty() ? std::vector<double>(v.size(), 1.0) : weights;
  for (double x : pts.w) pts.sqrt_w.push_back(std::sqrt(x));

  const double vmax = fit.parameters[0].estimate, km = fit.parameters[1].estimate;
  const double t = fit.t_quantile;
  ParameterEstimate kcat{"kcat", vmax / enzyme_conc, fit.parameters[0].se / enzyme_conc};
  kcat.ci_low = kcat.estimate - t * kcat.se;
  kcat.ci_high = kcat.estimate + t * kcat.se;
  kcat.profile_low = fit.parameters[0].profile_low / enzyme_conc;
  kcat.profile_high = fit.parameters[0].profile_high / enzyme_conc;
  // Delta method: ∇(V/K) = (1/K, −V/K²); the refitted form gives the same covariance.
  const double g0 = 1 / km, g1 = -vmax / (km * km);
  const auto& c = fit.covariance;
  const double se_ratio = std::sqrt(std::max(g0 * g0 * c(0, 0) + 2 * g0 * g1 * c(0, 1) + g1 * g1 * c(1, 1), 0.0));
  ParameterEstimate eff{"kcat/" + fit.parameters[1].name, vmax / (enzyme_conc * km), se_ratio / enzyme_conc};
  eff.ci_low = eff.estimate - t * eff.se;
  eff.ci_high = eff.estimate + t * eff.se;
  const detail::SpecificityFit sf = detail::specificity_fit(fit, pts, se_ratio, options);
  eff.profile_low = sf.profile.low / enzyme_conc;
  eff.profile_high = sf.profile.high / enzyme_conc;
  return {kcat, eff};
}

}  // namespace vzero
