// The lag search of the window finder: a block scan for clear lags, the lag shape for gentle
// ramps (lag_search.hpp).
#include "rates/lag_search.hpp"

#include <algorithm>

#include "rates/lag_model.hpp"

namespace vzero::detail {
namespace {

std::size_t z(int i) { return static_cast<std::size_t>(i); }

// Lag scan: slopes of the blocks of `p` reads starting at s0 … s0 + lag_max. A lag is present
// when the steepest block is steeper than the first by more than k_lag_z standard errors of
// the difference (read noise `sd`); the window then starts at the first block within one SE
// of the steepest. Returns that start (s0 = no lag).
constexpr double k_lag_z = 4.0;
int lag_scan(const LagSearch& q) {
  const auto& [stats, t, y, s0, p, lag_max, sd] = q;
  if (lag_max < 1 || !(sd > 0)) return s0;
  thread_local std::vector<double> b, se;  // scratch reused by each thread
  b.clear();
  se.clear();
  for (int j = s0; j <= s0 + lag_max && j + p <= static_cast<int>(t.size()); ++j) {
    b.push_back(stats.slope(j, j + p));
    se.push_back(sd / std::sqrt(stats.stt(j, j + p)));
  }
  if (b.size() < 2) return s0;
  const auto top = static_cast<std::size_t>(std::max_element(b.begin(), b.end()) - b.begin());
  if (top == 0) return s0;
  if (!(b[top] - b[0] > k_lag_z * std::hypot(se[0], se[top]))) return s0;
  for (std::size_t j = 1; j <= top; ++j)
    if (b[top] - b[j] <= std::hypot(se[j], se[top])) return s0 + static_cast<int>(j);
  return s0 + static_cast<int>(top);
}

// A lag by its shape (lag_model.hpp), for ramps too gentle for lag_scan's short windows: the
// lag curve fitted to the reads from s0 up to four times the conversion limit (the first half of
// the run when no limit is known; at least 2p reads), τ up to a third of the run; when a
// falling rate straightens the ramp (a slow onset while substrate runs out fast, an S-shaped
// curve), the lag curve with depletion against a parabola. When either fits better by more
// than k_lag_gain read-noise variances, the window starts where the rate has reached 95 % of
// its steady value (3τ), at most lag_max reads on; `ramp_end_s` is that time (a window that
// starts before it sits inside the ramp and underestimates v0). A fit better than the line by
// more than k_tau_band (χ²₁ at 5 %: a likelihood-ratio test of the one extra parameter, τ)
// but not by k_lag_gain leaves the window where it is and returns the largest τ its profile
// allows (`possible_tau_s`): the rate finder widens the interval for it (rates.cpp).
constexpr double k_lag_gain = 9.0;
LagStart lag_by_shape(const LagSearch& q, double baseline, double limit_signal) {
  const auto& [stats, t, y, s0, p, lag_max, sd] = q;
  const int mc = static_cast<int>(t.size());
  if (lag_max < 1 || !(sd > 0)) return {s0, -INFINITY};
  int last = s0;
  if (std::isfinite(limit_signal) && std::isfinite(baseline))
    while (last + 1 < mc && y[z(last + 1)] - baseline <= 4 * limit_signal) ++last;
  else
    last = s0 + (mc - s0) / 2 - 1;
  last = std::min(mc - 1, std::max(last, s0 + 2 * p - 1));
  const int n = last - s0 + 1;
  const double tau_max = (t[z(mc - 1)] - t[z(s0)]) / 3;
  // The lag curve is convex: reads whose parabola bends down (or not at all) cannot fit it
  // better than a line, so the fit is spared them.
  LagShape lag;
  if (stats.test(s0, last + 1, sd, t[z(s0)]).curvature > 0)
    lag = fit_lag_shape(t.data() + s0, y.data() + s0, n, sd, tau_max);
  LagShape best = lag;
  // With depletion, only the ramp's half bends upwards: a curve whose first half does not
  // (a straight start that bends down later, as far above Km) is no lag.
  if (!(lag.gain > k_lag_gain) && stats.test(s0, s0 + (n + 1) / 2, sd, t[z(s0)]).curvature > 0) {
    lag = fit_lag_depletion_shape(t.data() + s0, y.data() + s0, n, sd, tau_max);
    if (lag.gain > best.gain) best = lag;
  }
  if (!(lag.gain > k_lag_gain)) {
    LagStart none{s0, -INFINITY};
    if (best.gain > k_tau_band && best.tau_s > 0) {
      none.possible_tau_s = best.tau_high_s;
      none.possible_from_s = t[z(s0)];
    }
    return none;
  }
  int s = s0;
  while (s < s0 + lag_max && t[z(s)] - t[z(s0)] < 3 * lag.tau_s) ++s;
  return {s, t[z(s0)] + 3 * lag.tau_s};
}

}  // namespace

LagStart find_lag(const LagSearch& q, double baseline, double limit_signal) {
  LagStart r{lag_scan(q), -INFINITY};
  // The shape also tells where a ramp ends that the block scan found but could not pass.
  if (r.start == q.s0 || r.start == q.s0 + q.lag_max) {
    const LagStart shape = lag_by_shape(q, baseline, limit_signal);
    r.start = std::max(r.start, shape.start);
    r.ramp_end_s = shape.ramp_end_s;
    if (r.start == q.s0) {
      r.possible_tau_s = shape.possible_tau_s;
      r.possible_from_s = shape.possible_from_s;
    }
  }
  return r;
}

// A stretch after the window [s, e) steeper than the window itself: once an enzyme reaction
// runs, its rate only falls (substrate is used, product builds up), so a later rise means the
// window sat in a lag or another slow start and does not hold v0 (common practice: the
// initial rate is the steepest part of a progress curve without lag). Blocks of the window's
// length after it, up to k_later_blocks of them, each compared with the window's slope at
// k_later_z standard errors of the difference (read noise `sd`).
constexpr double k_later_z = 3.0;
constexpr int k_later_blocks = 4;
bool steeper_later(const WindowStats& stats, int s, int e, int mc, double sd) {
  const int len = e - s;
  if (!(sd > 0) || len < 3) return false;
  const double b = stats.slope(s, e), se = sd / std::sqrt(stats.stt(s, e));
  for (int k = 0, a = e; k < k_later_blocks && a + len <= mc; ++k, a += len) {
    const double later = stats.slope(a, a + len), later_se = sd / std::sqrt(stats.stt(a, a + len));
    if (later - b > k_later_z * std::hypot(se, later_se)) return true;
  }
  return false;
}

}  // namespace vzero::detail
