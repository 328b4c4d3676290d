// The fit's diagnostics: every point's fitted value and residual with its linearised
// coordinates, and the fitted curve on a log grid of s (per inhibitor level).
#include <algorithm>
#include <cmath>
#include <set>

#include "fit/fit_models.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"

namespace vzero {

std::vector<DiagnosticRow> diagnostics(const std::vector<double>& s, const std::vector<double>& inhibitor,
                                       const std::vector<double>& v, const std::vector<double>& weights,
                                       const FitResult& fit, int curve_points) {
  if (!fit.ok || !fit.model) throw UsageError("diagnostics: the fit has no estimate (" + fit.message + ")");
  const KineticModel& model = *fit.model;
  const detail::FitPoints pts =
      detail::make_points("diagnostics", s, inhibitor.empty() ? nullptr : &inhibitor, v, weights);
  std::vector<double> p;
  for (const auto& e : fit.parameters) p.push_back(e.estimate);
  const bool has_i = model.needs_inhibitor() && !inhibitor.empty();
  auto finite_or_nan = [](double x) { return std::isfinite(x) ? x : NAN; };
  auto fill = [&](DiagnosticRow& d) {
    d.inv_s = finite_or_nan(1 / d.s);
    d.inv_v = finite_or_nan(1 / d.v);
    d.s_over_v = finite_or_nan(d.s / d.v);
    d.v_over_s = finite_or_nan(d.v / d.s);
  };
  std::vector<DiagnosticRow> out;
  for (std::size_t k = 0; k < pts.size(); ++k) {
    DiagnosticRow d;
    d.s = pts.s[k];
    d.inhibitor = has_i ? pts.i[k] : NAN;
    d.v = pts.v[k];
    d.fitted = model.rate(p, pts.s[k], pts.i[k], {});
    d.residual = d.v - d.fitted;
    d.weight = pts.w[k];
    fill(d);
    out.push_back(d);
  }
  double s_lo = INFINITY, s_hi = 0;
  for (double e : pts.s)
    if (e > 0) s_lo = std::min(s_lo, e), s_hi = std::max(s_hi, e);
  std::set<double> levels;
  if (has_i)
    levels.insert(pts.i.begin(), pts.i.end());
  else
    levels.insert(NAN);
  const int count = std::max(curve_points, 2);
  for (double level : levels) {
    for (int k = 0; k < count; ++k) {
      DiagnosticRow d;
      d.curve = true;
      d.s = s_lo * std::pow(s_hi / s_lo, static_cast<double>(k) / (count - 1));
      d.inhibitor = level;
      d.fitted = d.v = model.rate(p, d.s, has_i ? level : 0.0, {});
      fill(d);
      out.push_back(d);
    }
  }
  return out;
}

}  // namespace vzero
