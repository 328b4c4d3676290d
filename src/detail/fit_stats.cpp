// Student t distribution function and quantile, for the interval half-widths.
#include <algorithm>
#include <cmath>

#include "vzero/error.hpp"
#include "vzero/fit.hpp"

namespace vzero {

namespace {
// Continued fraction of the regularized incomplete beta function, evaluated by the modified
// Lentz method (Press et al., Numerical Recipes, 3rd ed., §6.4 "betacf").
double beta_continued_fraction(double a, double b, double x) {
  constexpr double k_tiny = 1e-300;
  const double qab = a + b, qap = a + 1, qam = a - 1;
  double c = 1, d = 1 - qab * x / qap;
  if (std::fabs(d) < k_tiny) d = k_tiny;
  d = 1 / d;
  double h = d;
  for (int m = 1; m <= 1000; ++m) {
    const double m2 = 2.0 * m;
    double aa = m * (b - m) * x / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (std::fabs(d) < k_tiny) d = k_tiny;
    c = 1 + aa / c;
    if (std::fabs(c) < k_tiny) c = k_tiny;
    d = 1 / d;
    h *= d * c;
    aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (std::fabs(d) < k_tiny) d = k_tiny;
    c = 1 + aa / c;
    if (std::fabs(c) < k_tiny) c = k_tiny;
    d = 1 / d;
    const double del = d * c;
    h *= del;
    if (std::fabs(del - 1) < 1e-16) break;
  }
  return h;
}

// I_x(a, b), the regularized incomplete beta function.
double incomplete_beta(double a, double b, double x) {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const double log_front = std::lgamma(a + b) - std::lgamma(a) - std::lgamma(b) + a * std::log(x) + b * std::log1p(-x);
  const double front = std::exp(log_front);
  if (x < (a + 1) / (a + b + 2)) return front * beta_continued_fraction(a, b, x) / a;
  return 1 - front * beta_continued_fraction(b, a, 1 - x) / b;
}

// P(T > t) for t ≥ 0, computed directly (no 1 − P cancellation in the upper tail).
double upper_tail(double t, double df) { return 0.5 * incomplete_beta(df / 2, 0.5, df / (df + t * t)); }

double density(double t, double df) {
  const double log_c = std::lgamma((df + 1) / 2) - std::lgamma(df / 2) - 0.5 * std::log(df * M_PI);
  return std::exp(log_c - (df + 1) / 2 * std::log1p(t * t / df));
}
}  // namespace

double student_t_cdf(double t, double df) {
  if (!(df > 0) || std::isnan(t)) throw UsageError("student_t_cdf: df must be > 0 and t a number");
  return t >= 0 ? 1 - upper_tail(t, df) : upper_tail(-t, df);
}

double student_t_quantile(double p, double df) {
  if (!(df > 0) || !(p > 0 && p < 1)) throw UsageError("student_t_quantile: need df > 0 and 0 < p < 1");
  if (p == 0.5) return 0;
  const double tail = p > 0.5 ? 1 - p : p;  // find t > 0 with P(T > t) = tail
  // Bracket, then Newton steps kept inside the bracket (bisection when a step leaves it).
  double lo = 0, hi = 1;
  while (upper_tail(hi, df) > tail) {
    lo = hi;
    hi *= 2;
    if (hi > 1e300) break;
  }
  double t = 0.5 * (lo + hi);
  for (int k = 0; k < 200; ++k) {
    const double f = upper_tail(t, df) - tail;  // decreasing in t
    if (f > 0) lo = t; else hi = t;
    double next = t + f / density(t, df);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (std::fabs(next - t) <= 1e-15 * std::fabs(t)) {
      t = next;
      break;
    }
    t = next;
  }
  return p > 0.5 ? t : -t;
}

}  // namespace vzero
