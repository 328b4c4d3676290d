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

// RSS and coefficients of y on x and x² with an intercept (x scaled by `scale` for
// conditioning; the coefficients are in scaled units); NaN when the two do not vary apart.
struct Regress2 {
  double b1 = NAN, b2 = NAN, rss = NAN;
};
Regress2 regress2(const std::vector<double>& x, const double* y, int n, double scale) {
  double m1 = 0, m2 = 0, my = 0;
  for (int i = 0; i < n; ++i) {
    const double u = x[static_cast<std::size_t>(i)] / scale;
    m1 += u;
    m2 += u * u;
    my += y[i];
  }
  m1 /= n;
  m2 /= n;
  my /= n;
  double s11 = 0, s12 = 0, s22 = 0, s1y = 0, s2y = 0, syy = 0;
  for (int i = 0; i < n; ++i) {
    const double u = x[static_cast<std::size_t>(i)] / scale;
    const double d1 = u - m1, d2 = u * u - m2, dy = y[i] - my;
    s11 += d1 * d1;
    s12 += d1 * d2;
    s22 += d2 * d2;
    s1y += d1 * dy;
    s2y += d2 * dy;
    syy += dy * dy;
  }
  const double det = s11 * s22 - s12 * s12;
  Regress2 r;
  if (!(det > 1e-12 * s11 * s22)) return r;
  r.b1 = (s22 * s1y - s12 * s2y) / det;
  r.b2 = (s11 * s2y - s12 * s1y) / det;
  r.rss = std::max(0.0, syy - r.b1 * s1y - r.b2 * s2y);
  return r;
}

// Half the median read interval: the shortest τ the reads can tell from a step.
double tau_floor(const double* t, int n) {
  std::vector<double> steps;
  for (int i = 1; i < n; ++i) steps.push_back(t[i] - t[i - 1]);
  std::nth_element(steps.begin(), steps.begin() + static_cast<std::ptrdiff_t>(steps.size() / 2), steps.end());
  return 0.5 * steps[steps.size() / 2];
}

// g_τ(t − t₀) for every read.
void stretched_clock(const double* t, int n, double tau, std::vector<double>& x) {
  for (int i = 0; i < n; ++i) {
    const double u = t[i] - t[0];
    x[static_cast<std::size_t>(i)] = u + tau * std::expm1(-u / tau);
  }
}

}  // namespace

LagShape fit_lag_depletion_shape(const double* t, const double* y, int n, double sd, double tau_max_s) {
  LagShape best;
  if (n < 7 || !(sd > 0)) return best;
  const double tau_min = tau_floor(t, n);
  const double scale = t[n - 1] - t[0];
  if (!(tau_min > 0) || !(tau_max_s > tau_min) || !(scale > 0)) return best;
  std::vector<double> x(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) x[static_cast<std::size_t>(i)] = t[i] - t[0];
  const Regress2 parabola = regress2(x, y, n, scale);
  if (!std::isfinite(parabola.rss)) return best;
  double best_rss = parabola.rss;
  for (int k = 0; k < k_lag_grid; ++k) {
    const double tau = tau_min * std::pow(tau_max_s / tau_min, k / static_cast<double>(k_lag_grid - 1));
    stretched_clock(t, n, tau, x);
    const Regress2 r = regress2(x, y, n, scale);
    // A rate that rises with the clock is the plain lag curve's business (fit_lag_shape).
    if (!(r.b1 > 0) || !(r.b2 <= 0) || !(r.rss < best_rss)) continue;
    best_rss = r.rss;
    best.tau_s = tau;
    best.slope = r.b1 / scale;
  }
  best.gain = (parabola.rss - best_rss) / (sd * sd);
  return best;
}

LagShape fit_lag_shape(const double* t, const double* y, int n, double sd, double tau_max_s) {
  LagShape best;
  if (n < 6 || !(sd > 0)) return best;
  const double tau_min = tau_floor(t, n);
  if (!(tau_min > 0) || !(tau_max_s > tau_min)) return best;
  std::vector<double> x(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) x[static_cast<std::size_t>(i)] = t[i] - t[0];
  const Regress line = regress(x, y, n);
  if (!std::isfinite(line.rss)) return best;
  double best_rss = line.rss;
  for (int k = 0; k < k_lag_grid; ++k) {
    const double tau = tau_min * std::pow(tau_max_s / tau_min, k / static_cast<double>(k_lag_grid - 1));
    stretched_clock(t, n, tau, x);
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
