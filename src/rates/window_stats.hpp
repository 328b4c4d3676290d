// Constant-time straight-line and curvature statistics for any run of consecutive reads,
// from prefix sums. Internal to the rate finder (src/rates).
//
// Times are mapped to u = (t − t₀)/T (t₀ the first read, T the whole span) and signals to
// y − y₀ before summing, so early windows (the ones the finder searches) keep nearly all
// their digits; raw moments are centred on the window before use. The final estimates are
// always recomputed with two-pass sums (robust.hpp); these statistics only steer the search.
#pragma once

#include <cmath>
#include <vector>

namespace vzero::detail {

// Line and parabola fitted to reads [a, b).
struct WindowTest {
  int n = 0;
  double slope = NAN;            // OLS slope, y per time unit of the input
  double intercept_at_t0 = NAN;  // OLS line at time t (input units) given to `test`
  double rss_line = NAN;         // residual sum of squares of the line
  double curvature = NAN;        // c2 of y = c0 + c1·t + c2·t² (input units)
  double curvature_se = NAN;     // its standard error (from the parabola's residuals, or the floor)
  double drift = NAN;            // slope change across the window from the parabola, 2·c2·(t_last − t_first)
};

class WindowStats {
 public:
  // t strictly increasing; both arrays have n entries and must outlive this object.
  WindowStats(const double* t, const double* y, int n);

  // Statistics of reads [a, b). `sd_floor` (NaN = none) is a lower bound on the residual
  // SD used for curvature_se, e.g. the blank's read noise. `t_ref` is where
  // `intercept_at_t0` is evaluated.
  WindowTest test(int a, int b, double sd_floor, double t_ref) const;
  // OLS slope of reads [a, b) alone (cheaper).
  double slope(int a, int b) const {
    const Sums s = range(a, b);
    const double ub = s.u1 / s.n;
    const double m2 = s.u2 - s.n * ub * ub;
    const double c1 = s.uy - ub * s.y;
    return m2 > 0 ? c1 / m2 / span_ : NAN;
  }
  // Σ (t − t̄)² over reads [a, b), in input time units squared.
  double stt(int a, int b) const {
    const Sums s = range(a, b);
    const double ub = s.u1 / s.n;
    const double m2 = s.u2 - s.n * ub * ub;
    return (m2 > 0 ? m2 : 0.0) * span_ * span_;
  }

 private:
  struct Sums {
    double n, u1, u2, u3, u4, y, uy, u2y, yy;
  };
  // Sums over reads [a, b); defined here so the block scans' many calls inline.
  Sums range(int a, int b) const {
    const Sums& p = prefix_[static_cast<std::size_t>(a)];
    const Sums& q = prefix_[static_cast<std::size_t>(b)];
    return Sums{q.n - p.n, q.u1 - p.u1, q.u2 - p.u2,   q.u3 - p.u3, q.u4 - p.u4,
                q.y - p.y, q.uy - p.uy, q.u2y - p.u2y, q.yy - p.yy};
  }

  const double* t_;
  int n_;
  double t0_, span_, y0_;
  std::vector<Sums> prefix_;  // prefix_[i] = sums over reads [0, i)
};

}  // namespace vzero::detail
