#include "rates/robust.hpp"
#include "core/stats.hpp"

#include "rates/pair_slopes.hpp"

#include <algorithm>
#include <array>
#include <utility>

namespace vzero::detail {

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
  LineFit f = least_squares_line(x, y, n);
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
    const LineFit wf = least_squares_line(x, y, n, w.data());
    slope = wf.slope;
    intercept = wf.intercept;
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

}  // namespace vzero::detail
