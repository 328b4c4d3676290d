#include "core/stats.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <array>
#include <boost/math/distributions/normal.hpp>
#include <boost/math/distributions/students_t.hpp>
#include <cmath>
#include <map>
#include <utility>

namespace vzero::detail {

namespace {
// Errors become NaN (the callers check their inputs); nothing throws from here.
using Policy =
    boost::math::policies::policy<boost::math::policies::domain_error<boost::math::policies::ignore_error>,
                                  boost::math::policies::overflow_error<boost::math::policies::ignore_error>,
                                  boost::math::policies::evaluation_error<boost::math::policies::ignore_error>>;
}  // namespace

namespace {

// Σ(y − ŷ)², r², residual SD, standard errors and the 95 % interval of an unweighted line.
void fill_line_spread(const double* x, const double* y, int n, double mx, double sxx, double syy, Residual form,
                      LineFit& f) {
  double rss = 0;
  for (int i = 0; i < n; ++i) {
    const double e =
        form == Residual::fitted ? y[i] - (f.intercept + f.slope * x[i]) : y[i] - f.intercept - f.slope * x[i];
    rss += e * e;
  }
  f.rss = rss;
  f.r2 = syy > 0 ? 1 - rss / syy : NAN;
  if (n > 2) {
    const double s2 = rss / (n - 2);
    f.resid_sd = std::sqrt(s2);
    f.slope_se = std::sqrt(s2 / sxx);
    f.intercept_se = std::sqrt(s2 * (1.0 / n + mx * mx / sxx));
    const double tq = student_t_quantile(0.975, n - 2);
    f.ci_low = f.slope - tq * f.slope_se;
    f.ci_high = f.slope + tq * f.slope_se;
  }
}

}  // namespace

LineFit least_squares_line(const double* x, const double* y, int n, const double* w, Residual form) {
  LineFit f;
  f.n = n;
  if (n < 2) return f;
  // 1·v is v exactly, so the unweighted sums are the weighted ones with weights of 1.
  const auto weight = [w](int i) { return w ? w[i] : 1.0; };
  double sw = 0, mx = 0, my = 0;
  for (int i = 0; i < n; ++i) {
    sw += weight(i);
    mx += weight(i) * x[i];
    my += weight(i) * y[i];
  }
  mx /= sw;
  my /= sw;
  double sxx = 0, sxy = 0, syy = 0;
  for (int i = 0; i < n; ++i) {
    const double dx = x[i] - mx, dy = y[i] - my, wdx = weight(i) * dx;
    sxx += wdx * dx;
    sxy += wdx * dy;
    syy += weight(i) * dy * dy;
  }
  if (!(sxx > 0)) return f;
  f.slope = sxy / sxx;
  f.intercept = my - f.slope * mx;
  if (!w) fill_line_spread(x, y, n, mx, sxx, syy, form, f);
  return f;
}

double normal_quantile(double p) {
  if (!(p > 0 && p < 1)) return NAN;
  return boost::math::quantile(boost::math::normal_distribution<double, Policy>(), p);
}

double student_t_quantile(double p, double df) {
  if (!(p > 0 && p < 1) || !(df > 0)) return NAN;
  thread_local std::map<std::pair<double, double>, double> cache;
  if (const auto it = cache.find({p, df}); it != cache.end()) return it->second;
  const double v = boost::math::quantile(boost::math::students_t_distribution<double, Policy>(df), p);
  if (cache.size() < 100000) cache.emplace(std::make_pair(p, df), v);
  return v;
}

double student_t_sf(double t, double df) {
  if (std::isnan(t) || !(df > 0)) return NAN;
  return boost::math::cdf(boost::math::complement(boost::math::students_t_distribution<double, Policy>(df), t));
}

double median_step(const std::vector<double>& t) {
  std::vector<double> d;
  for (std::size_t i = 1; i < t.size(); ++i) d.push_back(t[i] - t[i - 1]);
  if (d.empty()) return 0;
  std::nth_element(d.begin(), d.begin() + static_cast<std::ptrdiff_t>(d.size() / 2), d.end());
  return d[d.size() / 2];
}

namespace {
// The centre x̄ and half-range h = max |x − x̄| the polynomial fits work in (z = (x − x̄)/h,
// so the powers of z stay within ±1); false when the points do not spread.
bool centre_and_scale(const double* x, int n, double& mx, double& h) {
  mx = 0;
  for (int i = 0; i < n; ++i) mx += x[i];
  mx /= n;
  h = 0;
  for (int i = 0; i < n; ++i) h = std::max(h, std::fabs(x[i] - mx));
  return h > 0;
}
}  // namespace

QuadFit quadratic(const double* x, const double* y, int n, double x_eval) {
  QuadFit q;
  q.n = n;
  if (n < 3) return q;
  double mx = 0, h = 0;
  if (!centre_and_scale(x, n, mx, h)) return q;
  // Normal equations over b = (1, z, z²): the six distinct sums of b_i·b_j and the three of
  // b_i·y, accumulated in point order (the same products and sums as g += b·bᵀ, rhs += b·y).
  double g01 = 0, g02 = 0, g11 = 0, g12 = 0, g22 = 0, g00 = 0, r0 = 0, r1 = 0, r2 = 0;
  for (int i = 0; i < n; ++i) {
    const double z = (x[i] - mx) / h;
    const double z2 = z * z;
    g00 += 1.0 * 1.0;
    g01 += 1.0 * z;
    g02 += 1.0 * z2;
    g11 += z * z;
    g12 += z * z2;
    g22 += z2 * z2;
    r0 += 1.0 * y[i];
    r1 += z * y[i];
    r2 += z2 * y[i];
  }
  Eigen::Matrix3d g;
  g << g00, g01, g02, g01, g11, g12, g02, g12, g22;
  const Eigen::Vector3d rhs(r0, r1, r2);
  const Eigen::Matrix3d ginv = g.inverse();
  const Eigen::Vector3d a = ginv * rhs;
  double rss = 0;
  for (int i = 0; i < n; ++i) {
    const double z = (x[i] - mx) / h;
    const double e = y[i] - (a[0] + a[1] * z + a[2] * z * z);
    rss += e * e;
  }
  const double ze = (x_eval - mx) / h;
  q.c0 = a[0] + a[1] * ze + a[2] * ze * ze;
  q.c1 = (a[1] + 2 * a[2] * ze) / h;
  q.c2 = a[2] / (h * h);
  if (n > 3) {
    const double s2 = rss / (n - 3);
    q.resid_sd = std::sqrt(s2);
    const double v11 = ginv(1, 1), v22 = ginv(2, 2), v12 = ginv(1, 2);
    q.c1_se = std::sqrt(std::max(0.0, s2 * (v11 + 4 * ze * v12 + 4 * ze * ze * v22))) / h;
    q.c2_se = std::sqrt(s2 * v22) / (h * h);
  }
  return q;
}

CubicSlope cubic_slope(const double* x, const double* y, int n, double x_eval) {
  CubicSlope c;
  if (n < 5) return c;
  double mx = 0, h = 0;
  if (!centre_and_scale(x, n, mx, h)) return c;
  // Normal equations over b = (1, z, z², z³), z = (x − x̄)/h: the sums of z⁰ … z⁶ and of
  // z⁰v … z³v, v = y − ȳ (the intercept absorbs ȳ; the slope is unchanged); the matrix is
  // symmetric positive definite when the points fix a cubic.
  double my = 0;
  for (int i = 0; i < n; ++i) my += y[i];
  my /= n;
  std::array<double, 7> sz{};
  std::array<double, 4> szy{};
  for (int i = 0; i < n; ++i) {
    const double z = (x[i] - mx) / h, v = y[i] - my;
    const double z2 = z * z, z3 = z2 * z;
    sz[0] += 1, sz[1] += z, sz[2] += z2, sz[3] += z3, sz[4] += z2 * z2, sz[5] += z2 * z3, sz[6] += z3 * z3;
    szy[0] += v, szy[1] += z * v, szy[2] += z2 * v, szy[3] += z3 * v;
  }
  Eigen::Matrix4d g;
  for (int r = 0; r < 4; ++r)
    for (int k = 0; k < 4; ++k) g(r, k) = sz[static_cast<std::size_t>(r + k)];
  const Eigen::Vector4d rhs(szy[0], szy[1], szy[2], szy[3]);
  const Eigen::LDLT<Eigen::Matrix4d> ldlt(g);
  if (ldlt.info() != Eigen::Success || !ldlt.isPositive() || !(ldlt.vectorD().minCoeff() > 1e-12 * g.trace()))
    return c;
  const Eigen::Vector4d a = ldlt.solve(rhs);
  const double ze = (x_eval - mx) / h;
  const Eigen::Vector4d d(0.0, 1.0, 2 * ze, 3 * ze * ze);  // d/dz of b at ze
  c.slope = d.dot(a) / h;
  c.var_factor = d.dot(ldlt.solve(d)) / (h * h);
  double rss = 0;  // from the residuals themselves: Σv² − aᵀXᵀv loses the digits of a close fit
  for (int i = 0; i < n; ++i) {
    const double z = (x[i] - mx) / h;
    const double e = (y[i] - my) - (a[0] + z * (a[1] + z * (a[2] + z * a[3])));
    rss += e * e;
  }
  c.resid_sd = std::sqrt(rss / (n - 4));
  return c;
}

}  // namespace vzero::detail
