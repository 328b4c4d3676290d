// The integrated rate law of the progress-curve fit (Lambert W closed form, implicit-function
// derivatives) and its Levenberg–Marquardt solver.
#include "fit/progress_model.hpp"

#include <fmt/format.h>
#include <Eigen/Cholesky>
#include <algorithm>
#include <boost/math/special_functions/lambert_w.hpp>
#include <cmath>

#include "vzero/progress.hpp"

namespace vzero::detail {

double lambert_w0_of_exp(double L) {
  if (L < 700) return boost::math::lambert_w0(std::exp(L));
  // Newton on f(w) = w + ln w − L, increasing and concave: from w = L − ln L (f ≤ 0) the
  // iterates rise monotonically to the root.
  double w = L - std::log(L);
  for (int i = 0; i < 100; ++i) {
    const double step = (w + std::log(w) - L) / (1 + 1 / w);
    w -= step;
    if (std::fabs(step) <= 1e-16 * w) break;
  }
  return w;
}

namespace {
// S from a·ln(S0/S) + b·(S0 − S) = v·tau: S = (a/b)·W0((b·S0/a)·exp((b·S0 − v·tau)/a)).
double substrate_left(double tau, double s0, double a, double b, double v) {
  if (tau <= 0) return s0;
  if (!std::isfinite(a) || !std::isfinite(b) || !std::isfinite(v) || !(a > 0)) return NAN;  // a step gone astray
  if (b == 0) return s0 * std::exp(-v * tau / a);
  const double e = (b * s0 - v * tau) / a;
  if (b > 0) return a / b * lambert_w0_of_exp(std::log(b * s0 / a) + e);
  // b < 0: the argument lies in [−1/e, 0) (b·S0/a ≥ −1 for every Kp, progress.hpp), where
  // W0 is the branch with W ≥ −1.
  const double z = b * s0 / a * std::exp(e);
  if (std::isnan(z)) return NAN;
  if (z <= -1 / M_E) return a / b * -1.0;  // rounding at the branch point W = −1
  return a / b * boost::math::lambert_w0(z);
}
}  // namespace

ProgressPoint progress_point(double tau, double s0, double a, double b, double v) {
  ProgressPoint p;
  p.s = substrate_left(tau, s0, a, b, v);
  if (!(p.s > 0) || tau <= 0) return p;  // all used (or not started): no sensitivity left
  // F(S) = a·ln(S0/S) + b·(S0 − S) − v·tau; ∂S/∂θ = −F_θ/F_S with F_S = −(a + b·S)/S.
  // For Michaelis–Menten (a = Km, b = 1) S/(a + S) = W/(1 + W): the dW/dx = W/(x(1 + W)) rule.
  const double k = p.s / (a + b * p.s);
  p.ds_da = k * std::log(s0 / p.s);
  p.ds_db = k * (s0 - p.s);
  p.ds_dv = -k * tau;
  p.ds_dtau = -k * v;
  return p;
}

namespace {
// Bates & Watts (1981) relative offset |Q₁ᵀr|/|Q₂ᵀr|, through the normal equations
// (|Q₁ᵀr|² = gᵀ(JᵀJ)⁻¹g, g = Jᵀr): the p × p system, not a QR of the n × p Jacobian.
double relative_offset(const Eigen::MatrixXd& j, const Eigen::VectorXd& r) {
  const Eigen::VectorXd g = j.transpose() * r;
  const Eigen::MatrixXd a = j.transpose() * j;
  const double along = std::max(g.dot(a.ldlt().solve(g)), 0.0);
  const double across = r.squaredNorm() - along;
  if (across <= 0) return along > 0 ? INFINITY : 0.0;
  return std::sqrt(along / across);
}

Eigen::MatrixXd free_columns(const Eigen::MatrixXd& jac, const std::vector<bool>& fixed) {
  Eigen::Index k = 0;
  Eigen::MatrixXd out(jac.rows(), static_cast<Eigen::Index>(std::count(fixed.begin(), fixed.end(), false)));
  for (std::size_t j = 0; j < fixed.size(); ++j)
    if (!fixed[j]) out.col(k++) = jac.col(static_cast<Eigen::Index>(j));
  return out;
}
}  // namespace

LsqResult least_squares(const ResidualFn& f, Eigen::VectorXd start, const std::vector<bool>& fixed,
                        int max_iterations, double exact_rss, double tolerance) {
  LsqResult out;
  out.theta = std::move(start);
  if (!f(out.theta, out.r, &out.jac)) return out;
  out.rss = out.r.squaredNorm();
  double lambda = 1e-3, crit = INFINITY;
  Eigen::VectorXd r_new;
  for (;;) {
    const Eigen::MatrixXd jf = free_columns(out.jac, fixed);
    crit = jf.cols() == 0 || out.rss <= exact_rss ? 0.0 : relative_offset(jf, out.r);
    if (crit < tolerance) break;
    if (out.iterations >= max_iterations) break;
    const Eigen::MatrixXd a = jf.transpose() * jf;
    const Eigen::VectorXd g = -(jf.transpose() * out.r);  // r = y − f would give +; here r = f − y
    bool accepted = false;
    while (!accepted && lambda <= 1e14) {
      Eigen::MatrixXd m = a;
      for (Eigen::Index c = 0; c < m.rows(); ++c) m(c, c) += lambda * std::max(a(c, c), 1e-300);
      const Eigen::VectorXd step = m.ldlt().solve(g);
      Eigen::VectorXd th = out.theta;
      Eigen::Index c = 0;
      for (std::size_t j = 0; j < fixed.size(); ++j)
        if (!fixed[j]) th(static_cast<Eigen::Index>(j)) += step(c++);
      if (f(th, r_new, nullptr) && std::isfinite(r_new.squaredNorm()) && r_new.squaredNorm() < out.rss) {
        out.theta = th;
        out.rss = r_new.squaredNorm();
        lambda = std::max(lambda * 0.1, 1e-12);
        accepted = true;
      } else {
        lambda *= 10;
      }
    }
    ++out.iterations;
    if (!accepted) break;
    f(out.theta, out.r, &out.jac);
  }
  out.converged = crit < tolerance || crit < 1e-6;
  return out;
}

}  // namespace vzero::detail

namespace vzero {

double progress_substrate(double tau, double s0, double km, double vmax, double kp) {
  const double a = std::isinf(kp) ? km : km * (1 + s0 / kp);
  const double b = std::isinf(kp) ? 1.0 : 1 - km / kp;
  return detail::progress_point(tau, s0, a, b, vmax).s;
}

std::vector<double> progress_curve(const ProgressFit& fit, std::size_t w, const ProgressWell& well, double lead_s,
                                   const std::vector<double>& t_s) {
  std::vector<double> out(t_s.size(), NAN);
  if (!fit.ok || w >= fit.offsets.size()) return out;
  const ParameterEstimate *km = fit.find("Km"), *vmax = fit.find("Vmax"), *kcat = fit.find("kcat");
  const ParameterEstimate *kp = fit.find("Kp"), *lead = fit.find("lead_s");
  if (!vmax && !kcat) vmax = fit.find(fmt::format("Vmax[E={:g}]", well.enzyme));
  if (!km || (!vmax && !kcat)) return out;
  const double v = vmax ? vmax->estimate : kcat->estimate * well.enzyme;
  const double l = lead ? lead->estimate : lead_s;
  for (std::size_t i = 0; i < t_s.size(); ++i)
    out[i] = well.s0 - progress_substrate((t_s[i] + l) / 60, well.s0, km->estimate, v, kp ? kp->estimate : INFINITY) +
             fit.offsets[w].estimate;
  return out;
}

}  // namespace vzero
