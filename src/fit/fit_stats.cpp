// Student t distribution function and quantile for the fit's interval half-widths: the
// public checked entry points over the one implementation every stage uses (core/stats,
// Boost.Math); kcat and kcat/Km from a fit (turnover).
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "core/stats.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"

namespace vzero {

double student_t_cdf(double t, double df) {
  if (!(df > 0) || std::isnan(t)) throw UsageError("student_t_cdf: df must be > 0 and t a number");
  // Each tail computed directly, so the far upper tail does not cancel in 1 − P.
  return t >= 0 ? 1 - detail::student_t_sf(t, df) : detail::student_t_sf(-t, df);
}

double student_t_quantile(double p, double df) {
  if (!(df > 0) || !(p > 0 && p < 1)) throw UsageError("student_t_quantile: need df > 0 and 0 < p < 1");
  if (p == 0.5) return 0;
  return detail::student_t_quantile(p, df);
}

std::vector<ParameterEstimate> turnover(const FitResult& fit, double enzyme_conc) {
  if (!fit.ok || fit.parameters.size() < 2) return {};
  if (!(enzyme_conc > 0) || !std::isfinite(enzyme_conc))
    throw UsageError(fmt::format("turnover: enzyme concentration is {}; it must be > 0", enzyme_conc));
  const double vmax = fit.parameters[0].estimate, km = fit.parameters[1].estimate;
  const double t = fit.t_quantile;
  ParameterEstimate kcat{"kcat", vmax / enzyme_conc, fit.parameters[0].se / enzyme_conc};
  kcat.ci_low = kcat.estimate - t * kcat.se;
  kcat.ci_high = kcat.estimate + t * kcat.se;
  kcat.profile_low = fit.parameters[0].profile_low / enzyme_conc;
  kcat.profile_high = fit.parameters[0].profile_high / enzyme_conc;
  // Delta method: ∇(V/(E·K)) = (1/(E·K), −V/(E·K²)).
  const double g0 = 1 / (enzyme_conc * km), g1 = -vmax / (enzyme_conc * km * km);
  const auto& c = fit.covariance;
  const double var = g0 * g0 * c(0, 0) + 2 * g0 * g1 * c(0, 1) + g1 * g1 * c(1, 1);
  ParameterEstimate eff{"kcat/" + fit.parameters[1].name, vmax / (enzyme_conc * km), std::sqrt(std::max(var, 0.0))};
  eff.ci_low = eff.estimate - t * eff.se;
  eff.ci_high = eff.estimate + t * eff.se;
  return {kcat, eff};
}

}  // namespace vzero
