#include "rates/robust.hpp"

#include "rates/pair_slopes.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <array>
#include <map>
#include <numbers>
#include <utility>

namespace vzero::detail {
namespace {

// ln Γ(x) for x > 0 by the Lanczos approximation (g = 7, 9 terms; the coefficients are the
// widely published ones, relative error ~1e-15). Used instead of std::lgamma, which writes
// the global `signgam` in glibc and so is not safe to call from several threads.
double log_gamma(double x) {
  static constexpr std::array<double, 9> c = {
      0.99999999999980993,  676.5203681218851,     -1259.1392167224028,
      771.32342877765313,   -176.61502916214059,   12.507343278686905,
      -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7};
  if (x < 0.5) return std::log(std::numbers::pi / std::sin(std::numbers::pi * x)) - log_gamma(1 - x);
  x -= 1;
  double a = c[0];
  const double t = x + 7.5;
  for (int i = 1; i < 9; ++i) a += c[static_cast<std::size_t>(i)] / (x + i);
  return 0.5 * std::log(2 * std::numbers::pi) + (x + 0.5) * std::log(t) - t + std::log(a);
}

// Continued fraction of the incomplete beta function (modified Lentz).
double beta_cf(double a, double b, double x) {
  constexpr double tiny = 1e-300, eps = 1e-16;
  const double qab = a + b, qap = a + 1, qam = a - 1;
  double c = 1, d = 1 - qab * x / qap;
  if (std::fabs(d) < tiny) d = tiny;
  d = 1 / d;
  double h = d;
  for (int m = 1; m <= 1000; ++m) {
    const double m2 = 2.0 * m;
    double aa = m * (b - m) * x / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (std::fabs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (std::fabs(c) < tiny) c = tiny;
    d = 1 / d;
    h *= d * c;
    aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (std::fabs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (std::fabs(c) < tiny) c = tiny;
    d = 1 / d;
    const double del = d * c;
    h *= del;
    if (std::fabs(del - 1) < eps) break;
  }
  return h;
}

// Regularised incomplete beta I_x(a, b).
double inc_beta(double a, double b, double x) {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const double ln_bt = log_gamma(a + b) - log_gamma(a) - log_gamma(b) + a * std::log(x) + b * std::log1p(-x);
  const double bt = std::exp(ln_bt);
  if (x < (a + 1) / (a + b + 2)) return bt * beta_cf(a, b, x) / a;
  return 1 - bt * beta_cf(b, a, 1 - x) / b;
}

double student_t_pdf(double t, double df) {
  const double ln = log_gamma((df + 1) / 2) - log_gamma(df / 2) - 0.5 * std::log(df * std::numbers::pi) -
                    (df + 1) / 2 * std::log1p(t * t / df);
  return std::exp(ln);
}

// Solves decreasing f(x) = target on x ≥ 0 by bracketing and Newton steps that fall back to
// bisection when they leave the bracket.
template <class Sf, class Pdf>
double invert_upper_tail(double target, double start, Sf sf, Pdf pdf) {
  double lo = 0, hi = std::max(start, 1.0);
  while (sf(hi) > target) { lo = hi; hi *= 2; }
  double x = std::clamp(start, lo, hi);
  for (int i = 0; i < 200; ++i) {
    const double f = sf(x) - target;
    if (f > 0) lo = x; else hi = x;
    double next = x + f / pdf(x);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (std::fabs(next - x) <= 1e-15 * std::max(1.0, std::fabs(x))) return next;
    x = next;
  }
  return x;
}

}  // namespace

static double student_t_quantile_uncached(double p, double df);

double student_t_sf(double t, double df) {
  if (std::isnan(t)) return NAN;
  const double half = 0.5 * inc_beta(df / 2, 0.5, df / (df + t * t));
  return t >= 0 ? half : 1 - half;
}

double normal_quantile(double p) {
  if (!(p > 0 && p < 1)) return NAN;
  if (p < 0.5) return -normal_quantile(1 - p);
  const auto sf = [](double x) { return 0.5 * std::erfc(x / std::numbers::sqrt2); };
  const auto pdf = [](double x) { return std::exp(-0.5 * x * x) / std::sqrt(2 * std::numbers::pi); };
  return invert_upper_tail(1 - p, 1.0, sf, pdf);
}

double student_t_quantile(double p, double df) {
  if (!(p > 0 && p < 1) || !(df > 0)) return NAN;
  if (p < 0.5) return -student_t_quantile(1 - p, df);
  // The rate finder asks for the same few (p, df) pairs many times per well: remember them.
  // One cache per thread, so no locking; the values do not depend on the cache.
  thread_local std::map<std::pair<double, double>, double> cache;
  if (const auto it = cache.find({p, df}); it != cache.end()) return it->second;
  const double v = student_t_quantile_uncached(p, df);
  if (cache.size() < 100000) cache.emplace(std::make_pair(p, df), v);
  return v;
}

static double student_t_quantile_uncached(double p, double df) {
  if (df == 1) return std::tan(std::numbers::pi * (p - 0.5));
  if (df == 2) return (2 * p - 1) / std::sqrt(2 * p * (1 - p));
  // Cornish–Fisher start, then exact inversion of the upper tail.
  const double z = normal_quantile(p);
  const double start = z + (z * z * z + z) / (4 * df) + (5 * std::pow(z, 5) + 16 * z * z * z + 3 * z) / (96 * df * df);
  return invert_upper_tail(
      1 - p, start, [df](double t) { return student_t_sf(t, df); }, [df](double t) { return student_t_pdf(t, df); });
}

double median_inplace(std::vector<double>& v) {
  if (v.empty()) return NAN;
  const auto n = v.size();
  const auto mid = v.begin() + static_cast<std::ptrdiff_t>(n / 2);
  select_kth(v.data(), n, n / 2);
  const double upper = *mid;
  if (n % 2 == 1) return upper;
  const double lower = *std::max_element(v.begin(), mid);
  return (lower + upper) / 2;
}

LineFit ols(const double* x, const double* y, int n) {
  LineFit f;
  f.n = n;
  if (n < 2) return f;
  double mx = 0, my = 0;
  for (int i = 0; i < n; ++i) { mx += x[i]; my += y[i]; }
  mx /= n;
  my /= n;
  double sxx = 0, sxy = 0, syy = 0;
  for (int i = 0; i < n; ++i) {
    const double dx = x[i] - mx, dy = y[i] - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  if (!(sxx > 0)) return f;
  f.slope = sxy / sxx;
  f.intercept = my - f.slope * mx;
  double rss = 0;
  for (int i = 0; i < n; ++i) {
    const double e = y[i] - (f.intercept + f.slope * x[i]);
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
  return f;
}

void wls(const double* x, const double* y, const double* w, int n, double& slope, double& intercept) {
  double sw = 0, mx = 0, my = 0;
  for (int i = 0; i < n; ++i) { sw += w[i]; mx += w[i] * x[i]; my += w[i] * y[i]; }
  mx /= sw;
  my /= sw;
  double sxx = 0, sxy = 0;
  for (int i = 0; i < n; ++i) {
    const double dx = x[i] - mx;
    sxx += w[i] * dx * dx;
    sxy += w[i] * dx * (y[i] - my);
  }
  slope = sxy / sxx;
  intercept = my - slope * mx;
}

namespace {

// Fills rss, resid_sd and r2 of a fitted line from its plain residuals.
void fill_residual_stats(const double* x, const double* y, int n, LineFit& f) {
  double my = 0;
  for (int i = 0; i < n; ++i) my += y[i];
  my /= n;
  double rss = 0, syy = 0;
  for (int i = 0; i < n; ++i) {
    const double e = y[i] - (f.intercept + f.slope * x[i]);
    rss += e * e;
    syy += (y[i] - my) * (y[i] - my);
  }
  f.rss = rss;
  f.r2 = syy > 0 ? 1 - rss / syy : NAN;
  f.resid_sd = n > 2 ? std::sqrt(rss / (n - 2)) : NAN;
}

// Σ k(k−1)(2k+5) over groups of equal values (Sen 1968 tie correction).
double tie_term(const double* v, int n) {
  thread_local std::vector<double> s;
  s.assign(v, v + n);
  std::sort(s.begin(), s.end());
  double sum = 0;
  for (std::size_t i = 0; i < s.size();) {
    std::size_t j = i;
    while (j < s.size() && s[j] == s[i]) ++j;
    const double k = static_cast<double>(j - i);
    if (k > 1) sum += k * (k - 1) * (2 * k + 5);
    i = j;
  }
  return sum;
}

}  // namespace

namespace {

// Sen (1968) eq. 2.6 interval ranks as SciPy 1.10 computes them (0-based, clamped into the
// array; std::nearbyint rounds half to even in the default rounding mode, as np.round does).
// Returns false when the variance is not positive.
const double& z975() {
  static const double z = normal_quantile(0.975);
  return z;
}

bool sen_ranks(double sig2, long count, long& lo, long& up) {
  const double z = z975();
  const double sigma = std::sqrt(sig2);
  up = std::min(static_cast<long>(std::nearbyint((static_cast<double>(count) + z * sigma) / 2)), count - 1);
  lo = std::max(static_cast<long>(std::nearbyint((static_cast<double>(count) - z * sigma) / 2)) - 1, 0L);
  return sig2 > 0 && up >= 0 && lo < count;
}

bool increasing_and_finite(const double* x, const double* y, int n) {
  for (int i = 0; i < n; ++i)
    if (!std::isfinite(x[i]) || !std::isfinite(y[i]) || (i > 0 && !(x[i] > x[i - 1]))) return false;
  return true;
}

// Theil–Sen for x strictly increasing (the rate finder's case): the same numbers as the
// general code below, with the order statistics of the slopes from pair_slope_ranks
// (O(n log n) for long windows instead of forming all n(n−1)/2 slopes).
LineFit theil_sen_increasing(const double* x, const double* y, int n, double* intercept_separate, bool interval) {
  LineFit f;
  f.n = n;
  const long count = static_cast<long>(n) * (n - 1) / 2;
  std::int64_t ranks[4];
  double v[4];
  int k = 0;
  if (count % 2 == 0) ranks[k++] = count / 2 - 1;
  ranks[k++] = count / 2;
  const int n_median = k;
  long lo = 0, up = 0;
  bool have_interval = false;
  if (interval) {
    const double nn = n;
    // x has no ties, so its tie term is 0.
    const double sig2 = (nn * (nn - 1) * (2 * nn + 5) - 0.0 - tie_term(y, n)) / 18.0;
    have_interval = sen_ranks(sig2, count, lo, up);
    if (have_interval) {
      ranks[k++] = lo;
      ranks[k++] = up;
    }
  }
  pair_slope_ranks(x, y, n, ranks, k, v);
  f.slope = n_median == 2 ? (v[0] + v[1]) / 2 : v[0];
  thread_local std::vector<double> tmp;
  tmp.resize(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) tmp[static_cast<std::size_t>(i)] = y[i] - f.slope * x[i];
  f.intercept = median_inplace(tmp);
  if (intercept_separate) {
    tmp.assign(y, y + n);
    const double my = median_inplace(tmp);
    tmp.assign(x, x + n);
    *intercept_separate = my - f.slope * median_inplace(tmp);
  }
  if (have_interval) {
    f.ci_low = v[n_median];
    f.ci_high = v[n_median + 1];
    f.slope_se = (f.ci_high - f.ci_low) / (2 * z975());
  }
  fill_residual_stats(x, y, n, f);
  return f;
}

}  // namespace

LineFit theil_sen(const double* x, const double* y, int n, double* intercept_separate, bool interval) {
  LineFit f;
  f.n = n;
  if (n < 2) return f;
  if (increasing_and_finite(x, y, n)) return theil_sen_increasing(x, y, n, intercept_separate, interval);
  std::vector<double> slopes;
  slopes.reserve(static_cast<std::size_t>(n) * static_cast<std::size_t>(n - 1) / 2);
  for (int j = 0; j < n; ++j)
    for (int i = 0; i < n; ++i)
      if (x[j] > x[i]) slopes.push_back((y[j] - y[i]) / (x[j] - x[i]));
  if (slopes.empty()) return f;
  f.slope = median_inplace(slopes);
  std::vector<double> tmp(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) tmp[static_cast<std::size_t>(i)] = y[i] - f.slope * x[i];
  f.intercept = median_inplace(tmp);
  if (intercept_separate) {
    std::vector<double> xs(x, x + n), ys(y, y + n);
    *intercept_separate = median_inplace(ys) - f.slope * median_inplace(xs);
  }
  if (!interval) {
    fill_residual_stats(x, y, n, f);
    return f;
  }
  // Sen (1968) eq. 2.6 with SciPy 1.10's index rule; std::nearbyint rounds half to even in
  // the default rounding mode, as np.round does.
  const double nn = n;
  const double sig2 = (nn * (nn - 1) * (2 * nn + 5) - tie_term(x, n) - tie_term(y, n)) / 18.0;
  const double z = normal_quantile(0.975);
  const double sigma = std::sqrt(sig2);
  const auto count = static_cast<long>(slopes.size());
  const long up = std::min(static_cast<long>(std::nearbyint((static_cast<double>(count) + z * sigma) / 2)), count - 1);
  const long lo = std::max(static_cast<long>(std::nearbyint((static_cast<double>(count) - z * sigma) / 2)) - 1, 0L);
  if (sig2 > 0 && up >= 0 && lo < count) {
    std::nth_element(slopes.begin(), slopes.begin() + lo, slopes.end());
    f.ci_low = slopes[static_cast<std::size_t>(lo)];
    std::nth_element(slopes.begin(), slopes.begin() + up, slopes.end());
    f.ci_high = slopes[static_cast<std::size_t>(up)];
    f.slope_se = (f.ci_high - f.ci_low) / (2 * z);
  }
  fill_residual_stats(x, y, n, f);
  return f;
}

LineFit huber(const double* x, const double* y, int n, double k, double tol, int max_iter) {
  LineFit f = ols(x, y, n);
  if (n < 3 || std::isnan(f.slope)) return f;
  const auto un = static_cast<std::size_t>(n);
  std::vector<double> r(un), r_new(un), w(un), a(un);
  for (std::size_t i = 0; i < un; ++i) r[i] = y[i] - (f.intercept + f.slope * x[i]);
  double scale = NAN, slope = f.slope, intercept = f.intercept;
  int it = 0;
  for (it = 1; it <= max_iter; ++it) {
    for (std::size_t i = 0; i < un; ++i) a[i] = std::fabs(r[i]);
    scale = median_inplace(a) / 0.6745;
    if (!(scale > 0)) break;
    for (std::size_t i = 0; i < un; ++i) {
      const double u = std::fabs(r[i] / scale);
      w[i] = u > 0 ? std::min(1.0, k / u) : 1.0;
    }
    wls(x, y, w.data(), n, slope, intercept);
    double num = 0, den = 0;
    for (std::size_t i = 0; i < un; ++i) {
      r_new[i] = y[i] - (intercept + slope * x[i]);
      num += (r[i] - r_new[i]) * (r[i] - r_new[i]);
      den += r[i] * r[i];
    }
    r.swap(r_new);
    if (std::sqrt(num / std::max(1e-20, den)) <= tol) break;
  }
  f.iterations = std::min(it, max_iter);
  f.slope = slope;
  f.intercept = intercept;
  f.intercept_se = NAN;
  fill_residual_stats(x, y, n, f);
  if (scale > 0) {
    // Asymptotic SE with Huber's κ correction on (XᵀX)⁻¹.
    double S = 0, m1 = 0;
    for (std::size_t i = 0; i < un; ++i) {
      const double u = r[i] / scale;
      const double psi = u * std::min(1.0, u != 0 ? k / std::fabs(u) : 1.0);
      S += (psi * scale) * (psi * scale);
      m1 += std::fabs(u) <= k ? 1.0 : 0.0;
    }
    S /= (n - 2);
    const double mean_pp = m1 / n;
    const double var_pp = n > 1 ? (m1 - m1 * mean_pp) / (n - 1) : 0.0;  // ψ' is 0 or 1
    const double kappa = 1 + 2 * var_pp / (n * mean_pp * mean_pp);
    double mx = 0;
    for (int i = 0; i < n; ++i) mx += x[i];
    mx /= n;
    double sxx = 0;
    for (int i = 0; i < n; ++i) sxx += (x[i] - mx) * (x[i] - mx);
    f.slope_se = std::sqrt(S) * kappa / mean_pp / std::sqrt(sxx);
    const double tq = student_t_quantile(0.975, n - 2);
    f.ci_low = f.slope - tq * f.slope_se;
    f.ci_high = f.slope + tq * f.slope_se;
  }
  return f;
}

QuadFit quadratic(const double* x, const double* y, int n, double x_eval) {
  QuadFit q;
  q.n = n;
  if (n < 3) return q;
  double mx = 0;
  for (int i = 0; i < n; ++i) mx += x[i];
  mx /= n;
  double h = 0;
  for (int i = 0; i < n; ++i) h = std::max(h, std::fabs(x[i] - mx));
  if (!(h > 0)) return q;
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

}  // namespace vzero::detail
