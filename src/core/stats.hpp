// Distribution functions the stages share, from Boost.Math (students_t, normal): accurate to
// a few ulp for any positive df, and safe to call from many threads.
//   normal_quantile(0.975) = 1.959963984540054 (R qnorm)
//   student_t_quantile(0.975, 10) = 2.228138851986274 (R qt)
#pragma once

#include <cmath>
#include <vector>

namespace vzero::detail {

// A fitted line y = intercept + slope·x with its uncertainty.
struct LineFit {
  double slope = NAN;
  double intercept = NAN;
  double slope_se = NAN;      // standard error of the slope
  double intercept_se = NAN;  // least squares only; NaN for the robust estimators
  double ci_low = NAN;        // 95 % interval of the slope
  double ci_high = NAN;
  double resid_sd = NAN;  // √(RSS/(n−2)) of the plain residuals
  double rss = NAN;       // Σ (y − ŷ)² of the plain residuals
  double r2 = NAN;        // 1 − RSS/Σ(y − ȳ)²
  int n = 0;
  int iterations = 0;  // Huber: IRLS iterations used
};

// How a residual is formed: y − (a + b·x) (the fitted value taken away) or y − a − b·x (the
// intercept, then the slope term). They differ in the last bit now and then; the rate finder
// uses the first, the blank and the standard curve the second, and each keeps its own so
// that no output moves.
enum class Residual { fitted, stepwise };

// The one least-squares straight line, with centred two-pass sums: (weighted) means first,
// then Σw(x−x̄)², Σw(x−x̄)(y−ȳ) in index order, residuals recomputed from the fitted line
// (NIST StRD Norris to ≥ 12 digits). Needs n ≥ 2 and x not all equal, else slope and
// intercept are NaN. Without weights (w null) it also fills rss, r2, resid_sd, the standard
// errors and the 95 % interval slope ± t(0.975, n−2)·SE (NaN with n = 2). With weights
// w ≥ 0 only slope and intercept: the spread then depends on what the weights mean, which
// the caller knows (Huber's IRLS). Weights of 1 give bit for bit the unweighted line.
LineFit least_squares_line(const double* x, const double* y, int n, const double* w = nullptr,
                           Residual form = Residual::fitted);

// Least-squares parabola y = c0 + c1·(x − x_eval) + c2·(x − x_eval)², solved on centred and
// scaled x (two-pass), so c1 is the tangent at x_eval.
struct QuadFit {
  double c0 = NAN, c1 = NAN, c2 = NAN;
  double c1_se = NAN, c2_se = NAN;
  double resid_sd = NAN;  // √(RSS/(n−3))
  int n = 0;
};
QuadFit quadratic(const double* x, const double* y, int n, double x_eval);
// The slope at x_eval of the least-squares cubic through the n points (n ≥ 5), the factor v
// with Var(slope) = σ²·v for read noise σ, and the residual SD √(RSS/(n − 4)); NaN when the
// points cannot fix a cubic.
struct CubicSlope {
  double slope = NAN, var_factor = NAN, resid_sd = NAN;
};
CubicSlope cubic_slope(const double* x, const double* y, int n, double x_eval);

// Quantiles; NaN outside 0 < p < 1 or for df ≤ 0. The t quantile of the same (p, df) is
// remembered per thread: the rate finder asks for the same few many times per well.
double normal_quantile(double p);
double student_t_quantile(double p, double df);
// Upper tail P(T > t) of Student's t with df degrees of freedom, computed as a tail (no
// cancellation in 1 − P far out).
double student_t_sf(double t, double df);

// The median of the steps between consecutive times (0 for fewer than two): the read
// interval `inspect` shows and the time-unit rule judges.
double median_step(const std::vector<double>& t);

}  // namespace vzero::detail
