#include "rates/start_screen.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <vector>

namespace vzero::detail {
namespace {

// A fit of the first reads: the disturbance's coefficient, its SE, the square term's
// t-value and the residual sum of squares.
struct Fit {
  bool ok = false;
  double d = NAN, d_se = NAN, c2_t = 0, rss = INFINITY;
};

// Least squares of v on 1, u, (u² when `square`), exp(−(t − t0)/τ); SEs from max(sd, residual SD).
Fit fit(const double* t, const std::vector<double>& v, int span, double total, double tau, bool square, double sd) {
  const int k = square ? 4 : 3;
  Eigen::MatrixXd x(span, k);
  for (int i = 0; i < span; ++i) {
    const double u = (t[i] - t[0]) / total;  // scaled for conditioning
    x(i, 0) = 1;
    x(i, 1) = u;
    if (square) x(i, 2) = u * u;
    x(i, k - 1) = std::exp(-(t[i] - t[0]) / tau);
  }
  const Eigen::Map<const Eigen::VectorXd> y(v.data(), span);
  const Eigen::MatrixXd xtx = x.transpose() * x;
  const Eigen::FullPivLU<Eigen::MatrixXd> lu(xtx);
  Fit f;
  if (!lu.isInvertible()) return f;
  const Eigen::VectorXd beta = lu.solve(x.transpose() * y);
  const Eigen::MatrixXd inv = lu.inverse();
  f.rss = (y - x * beta).squaredNorm();
  const double s = std::max(sd, std::sqrt(f.rss / (span - k)));
  f.d = beta(k - 1);
  f.d_se = s * std::sqrt(inv(k - 1, k - 1));
  if (square) f.c2_t = beta(2) / (s * std::sqrt(inv(2, 2)));
  f.ok = true;
  return f;
}

}  // namespace

StartScreen screen_start(const double* t, const double* y, int n, int min_points, double sd, double z_cut) {
  StartScreen out;
  constexpr int k_min_reads = 8;
  if (n < k_min_reads || !(sd > 0)) return out;
  const int span = std::min(n, std::max(min_points + 5, 12));
  std::vector<double> gaps, v;
  for (int i = 1; i < span; ++i) gaps.push_back(t[i] - t[i - 1]);
  std::nth_element(gaps.begin(), gaps.begin() + static_cast<long>(gaps.size() / 2), gaps.end());
  const double dt = gaps[gaps.size() / 2];
  const double total = t[span - 1] - t[0];
  if (!(dt > 0) || !(total > 0)) return out;
  for (int i = 0; i < span; ++i) v.push_back(y[i] - y[0]);
  double best_rss = INFINITY;
  for (int k = 1; k <= 3; ++k) {
    const double tau = k * dt / 3.0;
    // The square term (a bend, as substrate is used) is kept only when the reads show it.
    Fit f = fit(t, v, span, total, tau, true, sd);
    if (!f.ok) continue;
    if (std::fabs(f.c2_t) < k_bend_t) {
      const Fit line = fit(t, v, span, total, tau, false, sd);
      if (line.ok) f = line;
    }
    if (!(f.rss < best_rss)) continue;
    best_rss = f.rss;
    out.offset = f.d;
    out.z = f.d_se > 0 ? f.d / f.d_se : 0;
    out.decay_reads = k;
    out.decay_tau_s = tau;
    out.skip = 0;
    if (std::fabs(out.z) > z_cut) {
      const int cap = std::min(4, n - min_points);
      while (out.skip < cap && std::fabs(f.d * std::exp(-(t[out.skip] - t[0]) / tau)) > sd) ++out.skip;
    }
  }
  return out;
}

}  // namespace vzero::detail
