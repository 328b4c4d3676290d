// Levenberg–Marquardt on log-parameters with a projected box, and profile-t intervals.
#include <Eigen/Cholesky>
#include <Eigen/QR>
#include <algorithm>
#include <cmath>

#include "fit/fit_models.hpp"

namespace vzero::detail {

namespace {
// θⱼ = ln pⱼ, or pⱼ itself for a parameter that may take any sign (a curve's bottom).
bool on_log(const KineticModel& m, std::size_t j) { return !m.parameters[j].any_sign; }
double to_theta(const KineticModel& m, std::size_t j, double p) { return on_log(m, j) ? std::log(p) : p; }

std::vector<double> to_natural(const KineticModel& m, const std::vector<double>& th, const std::vector<bool>& fixed,
                               const std::vector<double>& fixed_values) {
  std::vector<double> p(th.size());
  // Fixed parameters keep their exact given value (no exp(log(c)) rounding).
  for (std::size_t j = 0; j < th.size(); ++j)
    p[j] = fixed[j] ? fixed_values[j] : on_log(m, j) ? std::exp(th[j]) : th[j];
  return p;
}

// Bates & Watts (1981) relative offset: |Q₁ᵀr| / |Q₂ᵀr|, the size of the residual's
// projection onto the tangent plane relative to the part orthogonal to it.
double relative_offset(const Eigen::MatrixXd& j, const Eigen::VectorXd& r) {
  Eigen::HouseholderQR<Eigen::MatrixXd> qr(j);
  const Eigen::VectorXd qtr = qr.householderQ().transpose() * r;
  const Eigen::Index pf = j.cols();
  const double along = qtr.head(pf).squaredNorm();
  const double across = qtr.tail(qtr.size() - pf).squaredNorm();
  if (across <= 0) return along > 0 ? INFINITY : 0.0;
  return std::sqrt(along / across);
}
}  // namespace

namespace {
// The weighted residuals and the Jacobian in θ (∂f/∂θ = p·∂f/∂p on the log scale).
void residuals_and_jacobian(const KineticModel& m, const FitPoints& pts, const std::vector<double>& p,
                            Eigen::MatrixXd& jac, Eigen::VectorXd& r) {
  const auto n = static_cast<Eigen::Index>(pts.size());
  jac = natural_jacobian(m, pts, p);
  for (std::size_t j = 0; j < p.size(); ++j)
    if (on_log(m, j)) jac.col(static_cast<Eigen::Index>(j)) *= p[j];
  r.resize(n);
  for (Eigen::Index k = 0; k < n; ++k) {
    const auto kk = static_cast<std::size_t>(k);
    r(k) = pts.sqrt_w[kk] * (pts.v[kk] - m.rate(p, pts.s[kk], pts.i[kk], {}));
  }
}

// The parameters free to move: not fixed, and not pinned at a bound the gradient pushes into.
std::vector<Eigen::Index> free_parameters(const std::vector<bool>& fixed, const std::vector<double>& th,
                                          const std::vector<double>& lo, const std::vector<double>& hi,
                                          const Eigen::VectorXd& g) {
  std::vector<Eigen::Index> free;
  for (std::size_t j = 0; j < th.size(); ++j) {
    if (fixed[j]) continue;
    const auto jj = static_cast<Eigen::Index>(j);
    if (th[j] <= lo[j] && g(jj) <= 0) continue;  // pinned at the lower bound
    if (th[j] >= hi[j] && g(jj) >= 0) continue;  // pinned at the upper bound
    free.push_back(jj);
  }
  return free;
}

// The state the iterations carry: θ, p = natural(θ), the box and the damping.
struct LmState {
  std::vector<double> th, lo, hi, p;
  double rss = 0;
  double lambda = 1e-3;
};

// Raises the damping until a step lowers the RSS (Marquardt scaling of the diagonal); returns
// false when none does. On success the state moves and `max_move` is the largest relative step.
bool damped_step(const KineticModel& m, const FitPoints& pts, const std::vector<bool>& fixed,
                 const std::vector<double>& start, const std::vector<Eigen::Index>& free, const Eigen::MatrixXd& jf,
                 const Eigen::VectorXd& gf, LmState& st, double& max_move) {
  const Eigen::MatrixXd a = jf.transpose() * jf;
  for (;;) {
    Eigen::MatrixXd mtx = a;
    for (Eigen::Index c = 0; c < mtx.rows(); ++c) mtx(c, c) += st.lambda * std::max(a(c, c), 1e-300);
    const Eigen::VectorXd step = mtx.ldlt().solve(gf);
    std::vector<double> th_new = st.th;
    for (std::size_t c = 0; c < free.size(); ++c) {
      const auto j = static_cast<std::size_t>(free[c]);
      th_new[j] = std::clamp(st.th[j] + step(static_cast<Eigen::Index>(c)), st.lo[j], st.hi[j]);
    }
    const std::vector<double> p_new = to_natural(m, th_new, fixed, start);
    const double rss_new = weighted_rss(m, pts, p_new);
    if (std::isfinite(rss_new) && rss_new < st.rss) {
      max_move = 0;
      for (std::size_t j = 0; j < st.th.size(); ++j)
        max_move = std::max(max_move, std::fabs(th_new[j] - st.th[j]) / (1.0 + std::fabs(st.th[j])));
      st.th = th_new, st.p = p_new, st.rss = rss_new;
      st.lambda = std::max(st.lambda * 0.1, 1e-12);
      return true;
    }
    st.lambda *= 10;
    if (st.lambda > 1e14) return false;
  }
}

// A run creeping along a valley towards a bound may never land on it exactly: within 1e-6
// relative of the bound (in ln p; of the box's half width on the own scale) counts as on it.
std::vector<int> bounds_reached(const KineticModel& m, const std::vector<bool>& fixed, const LmState& st) {
  std::vector<int> at(st.th.size(), 0);
  for (std::size_t j = 0; j < st.th.size(); ++j) {
    if (fixed[j]) continue;
    const double near = on_log(m, j) ? 1e-6 : 1e-6 * st.hi[j];
    if (st.th[j] <= st.lo[j] + near) at[j] = -1;
    if (st.th[j] >= st.hi[j] - near) at[j] = 1;
  }
  return at;
}
}  // namespace

LmResult levenberg_marquardt(const KineticModel& m, const FitPoints& pts, const Bounds& bounds,
                             std::vector<double> start, const std::vector<bool>& fixed, const LmSettings& settings) {
  const std::size_t np = start.size();
  const auto n = static_cast<Eigen::Index>(pts.size());
  LmState st;
  st.th.resize(np), st.lo.resize(np), st.hi.resize(np);
  for (std::size_t j = 0; j < np; ++j) {
    st.lo[j] = to_theta(m, j, bounds.lo[j]);
    st.hi[j] = to_theta(m, j, bounds.hi[j]);
    st.th[j] = fixed[j] ? to_theta(m, j, start[j]) : std::clamp(to_theta(m, j, start[j]), st.lo[j], st.hi[j]);
  }
  double scale = 0;  // Σ w v²: residuals below ~1e-14 of the data are an exact fit
  for (std::size_t k = 0; k < pts.size(); ++k) scale += pts.w[k] * pts.v[k] * pts.v[k];

  LmResult out;
  st.p = to_natural(m, st.th, fixed, start);
  st.rss = weighted_rss(m, pts, st.p);
  int it = 0;
  bool stalled = false;
  double crit = INFINITY;
  Eigen::MatrixXd jac;
  Eigen::VectorXd r;
  for (;;) {
    residuals_and_jacobian(m, pts, st.p, jac, r);
    const Eigen::VectorXd g = jac.transpose() * r;  // descent direction of RSS in θ
    const std::vector<Eigen::Index> free = free_parameters(fixed, st.th, st.lo, st.hi, g);
    if (st.rss <= 1e-28 * scale || free.empty()) {
      crit = 0;
      out.converged = true;
      break;
    }
    Eigen::MatrixXd jf(n, static_cast<Eigen::Index>(free.size()));
    Eigen::VectorXd gf(static_cast<Eigen::Index>(free.size()));
    for (std::size_t c = 0; c < free.size(); ++c) {
      jf.col(static_cast<Eigen::Index>(c)) = jac.col(free[c]);
      gf(static_cast<Eigen::Index>(c)) = g(free[c]);
    }
    crit = relative_offset(jf, r);
    if (crit < settings.tolerance) {
      out.converged = true;
      break;
    }
    if (it >= settings.max_iterations) break;
    double max_move = 0;
    const bool accepted = damped_step(m, pts, fixed, start, free, jf, gf, st, max_move);
    ++it;
    if (!accepted) {
      // No step lowers the RSS any more: the optimum is reached to rounding when the
      // relative offset is already small.
      stalled = true;
      break;
    }
    if (max_move <= 1e-15) {
      out.converged = true;
      break;
    }
  }
  if (stalled) out.converged = crit < 1e-6;
  out.p = st.p;
  out.rss = st.rss;
  out.iterations = it;
  out.relative_offset = crit;
  out.at_bound = bounds_reached(m, fixed, st);
  return out;
}

ProfileLimits profile_limits(const KineticModel& m, const FitPoints& pts, const Bounds& bounds, const LmResult& best,
                             std::size_t j, double se_j, double residual_sd, double cutoff, const LmSettings& settings,
                             const std::vector<bool>& held) {
  ProfileLimits out;
  std::vector<bool> fixed = held.empty() ? std::vector<bool>(best.p.size(), false) : held;
  fixed[j] = true;
  const double pj = best.p[j];
  // Steps are taken in ln pⱼ, starting from the relative standard error (in pⱼ itself,
  // from the standard error, for a parameter that may take any sign).
  const bool log_j = on_log(m, j);
  const double unit = log_j ? 1.0 : std::max(se_j, 1e-12 * std::fabs(pj));
  const double h = log_j ? std::clamp(se_j / pj, 1e-4, 1.0) : 1.0;
  auto value_at = [&](int side, double d) { return log_j ? pj * std::exp(side * d) : pj + side * d * unit; };
  for (int side : {-1, 1}) {
    std::vector<double> warm = best.p;
    const double room = log_j ? (side < 0 ? std::log(pj / bounds.lo[j]) : std::log(bounds.hi[j] / pj))
                              : (side < 0 ? pj - bounds.lo[j] : bounds.hi[j] - pj) / unit;
    // |τ| at θⱼ + side·d, refitting the other parameters from the last solution.
    auto tau = [&](double d) {
      std::vector<double> st = warm;
      st[j] = value_at(side, d);
      const LmResult r = levenberg_marquardt(m, pts, bounds, st, fixed, settings);
      warm = r.p;
      return std::sqrt(std::max(r.rss - best.rss, 0.0)) / residual_sd;
    };
    double a = 0, ta = 0, b = std::min(h, room), tb = tau(b);
    bool bracketed = tb >= cutoff;
    for (int k = 0; k < 60 && !bracketed && b < room; ++k) {
      a = b, ta = tb;
      b = std::min(room, b * 2);
      tb = tau(b);
      bracketed = tb >= cutoff;
    }
    if (!bracketed) continue;
    // Illinois regula falsi on |τ|(d) − cutoff over [a, b].
    double fa = ta - cutoff, fb = tb - cutoff;
    int last = 0;
    for (int k = 0; k < 200 && std::fabs(b - a) > 1e-12 * (1.0 + b); ++k) {
      const double c = b - fb * (b - a) / (fb - fa);
      const double fc = tau(c) - cutoff;
      if (std::fabs(fc) <= 1e-13 * cutoff) {
        a = b = c;
        break;
      }
      if ((fc < 0) == (fa < 0)) {
        a = c, fa = fc;
        if (last == -1) fb /= 2;
        last = -1;
      } else {
        b = c, fb = fc;
        if (last == 1) fa /= 2;
        last = 1;
      }
    }
    const double d = std::fabs(fa) < std::fabs(fb) ? a : b;
    (side < 0 ? out.low : out.high) = value_at(side, d);
  }
  return out;
}

}  // namespace vzero::detail
