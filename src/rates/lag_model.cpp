#include "rates/lag_model.hpp"

#include <algorithm>
#include <vector>

namespace vzero::detail {
namespace {

// RSS and slope of y on x with an intercept; NaN slope when x does not vary.
struct Regress {
  double slope = NAN, rss = NAN;
};
Regress regress(const std::vector<double>& x, const double* y, int n) {
  double mx = 0, my = 0;
  for (int i = 0; i < n; ++i) {
    mx += x[static_cast<std::size_t>(i)];
    my += y[i];
  }
  mx /= n;
  my /= n;
  double sxx = 0, sxy = 0, syy = 0;
  for (int i = 0; i < n; ++i) {
    const double dx = x[static_cast<std::size_t>(i)] - mx, dy = y[i] - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  Regress r;
  if (!(sxx > 0)) return r;
  r.slope = sxy / sxx;
  r.rss = std::max(0.0, syy - sxy * r.slope);
  return r;
}

}  // namespace

LagShape fit_lag_shape(const double* t, const double* y, int n, double sd, double tau_max_s) {
  LagShape best;
  if (n < 6 || !(sd > 0)) return best;
  std::vector<double> steps;
  for (int i = 1; i < n; ++i) steps.push_back(t[i] - t[i - 1]);
  std::nth_element(steps.begin(), steps.begin() + static_cast<std::ptrdiff_t>(steps.size() / 2), steps.end());
  const double tau_min = 0.5 * steps[steps.size() / 2];
  if (!(tau_min > 0) || !(tau_max_s > tau_min)) return best;
  std::vector<double> x(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) x[static_cast<std::size_t>(i)] = t[i] - t[0];
  const Regress line = regress(x, y, n);
  if (!std::isfinite(line.rss)) return best;
  double best_rss = line.rss;
  for (int k = 0; k < k_lag_grid; ++k) {
    const double tau = tau_min * std::pow(tau_max_s / tau_min, k / static_cast<double>(k_lag_grid - 1));
    for (int i = 0; i < n; ++i) {
      const double u = t[i] - t[0];
      x[static_cast<std::size_t>(i)] = u + tau * std::expm1(-u / tau);
    }
    const Regress r = regress(x, y, n);
    if (r.slope > 0 && r.rss < best_rss) {
      best_rss = r.rss;
      best.tau_s = tau;
      best.slope = r.slope;
    }
  }
  best.gain = (line.rss - best_rss) / (sd * sd);
  return best;
}

}  // namespace vzero::detail
