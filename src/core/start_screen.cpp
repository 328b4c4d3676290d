#include "core/start_screen.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cstring>
#include <vector>

namespace vzero::detail {
namespace {

// A fit of the first reads: the disturbance's coefficient, its SE, the square term's
// t-value and the residual sum of squares.
struct Fit {
  bool ok = false;
  double d = NAN, d_se = NAN, c2_t = 0, rss = INFINITY;
};

// The regressors 1, u, (u² when `square`), exp(−(t − t0)/τ) of one decay (u scaled by the
// span's duration for conditioning), their normal matrix's LU and its inverse: they depend
// on the read times only.
// Small fixed-capacity matrices: at most 4 regressors, so no heap once a design is built.
using Small = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, 0, 4, 4>;
using SmallVec = Eigen::Matrix<double, Eigen::Dynamic, 1, 0, 4, 1>;
struct Design {
  bool built = false, ok = false;
  Eigen::MatrixXd x;
  Eigen::FullPivLU<Small> lu;
  Small inv;
};
void build(Design& d, const double* t, int span, double total, double tau, bool square) {
  const int k = square ? 4 : 3;
  d.built = true;
  d.x.resize(span, k);
  for (int i = 0; i < span; ++i) {
    const double u = (t[i] - t[0]) / total;  // scaled for conditioning
    d.x(i, 0) = 1;
    d.x(i, 1) = u;
    if (square) d.x(i, 2) = u * u;
    d.x(i, k - 1) = std::exp(-(t[i] - t[0]) / tau);
  }
  const Small xtx = d.x.transpose() * d.x;
  d.lu.compute(xtx);
  d.ok = d.lu.isInvertible();
  if (d.ok) d.inv = d.lu.inverse();
}
// The designs of one stretch of read times, kept per thread for the next trace: the wells
// of a plate mostly share their first reads' times, and the same times give the same
// designs bit for bit, so only the right-hand sides are new.
struct Designs {
  std::vector<double> t;  // the read times they were made for (the key)
  double dt = NAN, total = NAN;
  Design d[3][2];         // decay of k = 1, 2, 3 reads; with the square term, without
};

Designs& designs_for(const double* t, int span) {
  thread_local Designs c;
  const auto us = static_cast<std::size_t>(span);
  if (c.t.size() == us && std::memcmp(c.t.data(), t, us * sizeof(double)) == 0) return c;
  c.t.assign(t, t + span);
  std::vector<double> gaps;
  for (int i = 1; i < span; ++i) gaps.push_back(t[i] - t[i - 1]);
  std::nth_element(gaps.begin(), gaps.begin() + static_cast<long>(gaps.size() / 2), gaps.end());
  c.dt = gaps[gaps.size() / 2];
  c.total = t[span - 1] - t[0];
  for (auto& row : c.d)
    for (Design& d : row) d.built = false;
  return c;
}

// Least squares of v on a design; SEs from max(sd, residual SD). No heap: Xᵀy, β and the
// residuals are formed in fixed-capacity vectors and a loop.
Fit fit(const Design& design, const std::vector<double>& v, int span, bool square, double sd) {
  const int k = square ? 4 : 3;
  Fit f;
  if (!design.ok) return f;
  const Eigen::MatrixXd& x = design.x;
  const Eigen::Map<const Eigen::VectorXd> y(v.data(), span);
  SmallVec xty(k);
  for (int j = 0; j < k; ++j) xty(j) = x.col(j).dot(y);
  const SmallVec beta = design.lu.solve(xty);
  double rss = 0;
  for (int i = 0; i < span; ++i) {
    const double e = y(i) - x.row(i).dot(beta);
    rss += e * e;
  }
  f.rss = rss;
  const double s = std::max(sd, std::sqrt(f.rss / (span - k)));
  f.d = beta(k - 1);
  f.d_se = s * std::sqrt(design.inv(k - 1, k - 1));
  if (square) f.c2_t = beta(2) / (s * std::sqrt(design.inv(2, 2)));
  f.ok = true;
  return f;
}

// The fit of one decay (k reads), its design made when first asked for.
Fit fit_decay(Designs& c, const double* t, const std::vector<double>& v, int span, int k, bool square, double sd) {
  Design& d = c.d[k - 1][square ? 0 : 1];
  if (!d.built) build(d, t, span, c.total, k * c.dt / 3.0, square);
  return fit(d, v, span, square, sd);
}

}  // namespace

StartScreen screen_start(const double* t, const double* y, int n, int min_points, double sd, double z_cut) {
  StartScreen out;
  constexpr int k_min_reads = 8;
  if (n < k_min_reads || !(sd > 0)) return out;
  const int span = std::min(n, start_screen_span(min_points));
  Designs& c = designs_for(t, span);
  const double dt = c.dt, total = c.total;
  if (!(dt > 0) || !(total > 0)) return out;
  thread_local std::vector<double> v;
  v.clear();
  for (int i = 0; i < span; ++i) v.push_back(y[i] - y[0]);
  double best_rss = INFINITY;
  for (int k = 1; k <= 3; ++k) {
    const double tau = k * dt / 3.0;
    // The square term (a bend, as substrate is used) is kept only when the reads show it.
    Fit f = fit_decay(c, t, v, span, k, true, sd);
    if (!f.ok) continue;
    if (std::fabs(f.c2_t) < k_bend_t) {
      const Fit line = fit_decay(c, t, v, span, k, false, sd);
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
