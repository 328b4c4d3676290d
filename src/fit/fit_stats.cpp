// Student t distribution function and quantile for the fit's interval half-widths: the
// public checked entry points over the one implementation every stage uses (core/stats,
// Boost.Math).
#include <fmt/format.h>
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

}  // namespace vzero
