#include "rates/window_stats.hpp"

#include <algorithm>

namespace vzero::detail {

WindowStats::WindowStats(const double* t, const double* y, int n) : t_(t), n_(n) {
  t0_ = n > 0 ? t[0] : 0.0;
  span_ = n > 1 ? t[n - 1] - t[0] : 1.0;
  if (!(span_ > 0)) span_ = 1.0;
  y0_ = n > 0 ? y[0] : 0.0;
  prefix_.assign(static_cast<std::size_t>(n) + 1, Sums{0, 0, 0, 0, 0, 0, 0, 0, 0});
  for (int i = 0; i < n; ++i) {
    const double u = (t[i] - t0_) / span_, v = y[i] - y0_, u2 = u * u;
    const Sums& p = prefix_[static_cast<std::size_t>(i)];
    prefix_[static_cast<std::size_t>(i) + 1] =
        Sums{p.n + 1, p.u1 + u,     p.u2 + u2,      p.u3 + u2 * u, p.u4 + u2 * u2,
             p.y + v, p.uy + u * v, p.u2y + u2 * v, p.yy + v * v};
  }
}

WindowTest WindowStats::test(int a, int b, double sd_floor, double t_ref) const {
  WindowTest w;
  w.n = b - a;
  if (w.n < 2) return w;
  const Sums s = range(a, b);
  const double n = s.n;
  const double ub = s.u1 / n, yb = s.y / n;
  // Central moments of u about the window mean, and centred cross products.
  const double m2 = s.u2 - n * ub * ub;
  const double m3 = s.u3 - 3 * ub * s.u2 + 2 * n * ub * ub * ub;
  const double m4 = s.u4 - 4 * ub * s.u3 + 6 * ub * ub * s.u2 - 3 * n * ub * ub * ub * ub;
  const double syy = std::max(0.0, s.yy - n * yb * yb);
  const double r1 = s.uy - ub * s.y;                                         // Σ (u−ū) y
  const double r2 = (s.u2y - 2 * ub * s.uy + ub * ub * s.y) - m2 / n * s.y;  // Σ q y, q = (u−ū)² − m2/n
  if (!(m2 > 0)) return w;
  const double slope_u = r1 / m2;
  w.slope = slope_u / span_;
  const double u_ref = (t_ref - t0_) / span_;
  w.intercept_at_t0 = y0_ + yb + slope_u * (u_ref - ub);
  w.rss_line = std::max(0.0, syy - slope_u * r1);
  if (w.n < 4) return w;
  const double g22 = m4 - m2 * m2 / n;
  const double det = m2 * g22 - m3 * m3;
  if (!(det > 0)) return w;
  const double b1 = (g22 * r1 - m3 * r2) / det;
  const double b2 = (m2 * r2 - m3 * r1) / det;
  const double rss_quad = std::max(0.0, syy - (b1 * r1 + b2 * r2));
  double sd = std::sqrt(rss_quad / (n - 3));
  if (sd_floor > sd) sd = sd_floor;
  w.curvature = b2 / (span_ * span_);
  w.curvature_se = sd * std::sqrt(m2 / det) / (span_ * span_);
  w.drift = 2 * w.curvature * (t_[b - 1] - t_[a]);
  return w;
}

}  // namespace vzero::detail
