// The automatic window search: disturbed start, lag scan, and growth under the table of
// window rules (include/vzero/rates.hpp explains it in words).
#include <algorithm>

#include "core/stats.hpp"
#include "rates/lag_model.hpp"
#include "rates/rate_window.hpp"
#include "rates/start_screen.hpp"
#include "rates/window_stats.hpp"

namespace vzero {
namespace {

// A window ends (or its start moves) on curvature only when it shows in this many
// consecutive candidates: one significant test in a long sequence of tests is expected by
// chance, three in a row are not.
constexpr int k_confirm = 3;
// Reads in the spike screen's neighbourhood of a read (the read and its six neighbours,
// rate_window.cpp).
constexpr int k_neighbourhood = 7;
// Fewest reads on which the curvature test is run (2 residual degrees of freedom).
constexpr int k_min_test_reads = 5;

}  // namespace

bool significant_bend(int n, double c, double se, double drift, double slope, double tc, const RateOptions& opt) {
  return n >= k_min_test_reads && se > 0 && std::fabs(c) > tc * se &&
         std::fabs(drift) > opt.slope_drift * std::fabs(slope);
}

namespace {

// Curved when the parabola's square term is significant and matters; the first read of the
// window must not carry the verdict alone (mixing often disturbs it), so the window without
// its first read must be curved the same way.
int curvature_rule(const WindowCandidate& c, const RateOptions& opt) {
  if (!(opt.linearity_alpha > 0)) return 0;
  if (!significant_bend(c.n, c.curvature, c.curvature_se, c.drift, c.slope, c.critical_t, opt)) return 0;
  const bool rest =
      c.rest_n < k_min_test_reads || (significant_bend(c.rest_n, c.rest_curvature, c.rest_curvature_se, c.rest_drift,
                                                       c.rest_slope, c.rest_critical_t, opt) &&
                                      (c.rest_curvature > 0) == (c.curvature > 0));
  if (!rest) return 0;
  return c.curvature > 0 ? 1 : -1;
}

int conversion_rule(const WindowCandidate& c, const RateOptions&) {
  return std::isfinite(c.product_limit) && c.product > c.product_limit ? -1 : 0;
}

}  // namespace

const std::vector<WindowRule>& default_window_rules() {
  static const std::vector<WindowRule> rules = {
      {"conversion", 1, false, conversion_rule},
      {"curvature", k_confirm, true, curvature_rule},
  };
  return rules;
}

}  // namespace vzero

namespace vzero::detail {
namespace {

using vzero::significant_bend;

std::size_t z(int i) { return static_cast<std::size_t>(i); }

// Two-sided critical t values by degree of freedom, remembered per thread for the last
// probability asked (the rate finder asks the same one for every well).
class CriticalT {
 public:
  explicit CriticalT(double p) : cache_(table()) {
    if (cache_.p != p) {
      cache_.p = p;
      cache_.by_df.clear();
    }
  }
  double operator()(int df) {
    if (df < 1) return NAN;
    if (df > 100000) return student_t_quantile(cache_.p, df);
    if (z(df) >= cache_.by_df.size()) cache_.by_df.resize(z(df) + 1, NAN);
    double& v = cache_.by_df[z(df)];
    if (std::isnan(v)) v = student_t_quantile(cache_.p, df);
    return v;
  }

 private:
  struct Table {
    double p = NAN;
    std::vector<double> by_df;
  };
  static Table& table() {
    thread_local Table t;
    return t;
  }
  Table& cache_;
};

// Lag scan: slopes of the blocks of `p` reads starting at s0 … s0 + lag_max. A lag is present
// when the steepest block is steeper than the first by more than k_lag_z standard errors of
// the difference (read noise `sd`); the window then starts at the first block within one SE
// of the steepest. Returns that start (s0 = no lag).
constexpr double k_lag_z = 4.0;
int lag_scan(const WindowStats& stats, const std::vector<double>& t, int s0, int p, int lag_max, double sd) {
  if (lag_max < 1 || !(sd > 0)) return s0;
  std::vector<double> b, se;
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
// lag curve fitted to the reads from s0 up to twice the conversion limit (the first half of
// the run when no limit is known; at least 2p reads), τ up to a third of the run; when a
// falling rate straightens the ramp (a slow onset while substrate runs out fast, an S-shaped
// curve), the lag curve with depletion against a parabola. When either fits better by more
// than k_lag_gain read-noise variances, the window starts where the rate has reached 95 % of
// its steady value (3τ), at most lag_max reads on; `ramp_end_s` is that time (a window that
// starts before it sits inside the ramp and underestimates v0).
constexpr double k_lag_gain = 9.0;
struct ShapeLag {
  int start = 0;
  double ramp_end_s = -INFINITY;
};
ShapeLag lag_by_shape(const WindowStats& stats, const std::vector<double>& t, const std::vector<double>& y, int s0,
                      int p, int lag_max, double sd, double baseline, double limit_signal) {
  const int mc = static_cast<int>(t.size());
  if (lag_max < 1 || !(sd > 0)) return {s0, -INFINITY};
  int last = s0;
  if (std::isfinite(limit_signal) && std::isfinite(baseline))
    while (last + 1 < mc && y[z(last + 1)] - baseline <= 2 * limit_signal) ++last;
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
  // With depletion, only the ramp's half bends upwards: a curve whose first half does not
  // (a straight start that bends down later, as far above Km) is no lag.
  if (!(lag.gain > k_lag_gain) && stats.test(s0, s0 + (n + 1) / 2, sd, t[z(s0)]).curvature > 0)
    lag = fit_lag_depletion_shape(t.data() + s0, y.data() + s0, n, sd, tau_max);
  if (!(lag.gain > k_lag_gain)) return {s0, -INFINITY};
  int s = s0;
  while (s < s0 + lag_max && t[z(s)] - t[z(s0)] < 3 * lag.tau_s) ++s;
  return {s, t[z(s0)] + 3 * lag.tau_s};
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

// The candidate [s, e) of the screened reads as the rules see it.
WindowCandidate candidate(const WindowStats& stats, const std::vector<double>& ct, int s, int e, double sd_floor,
                          double t_ref, double baseline, double limit_signal, CriticalT& t_crit) {
  WindowCandidate c;
  const WindowTest wt = stats.test(s, e, sd_floor, t_ref);
  c.n = wt.n;
  c.t_first_s = ct[z(s)];
  c.t_last_s = ct[z(e - 1)];
  c.slope = wt.slope;
  c.curvature = wt.curvature;
  c.curvature_se = wt.curvature_se;
  c.drift = wt.drift;
  c.critical_t = t_crit(wt.n - 3);
  if (e - s - 1 >= 2) {
    const WindowTest rest = stats.test(s + 1, e, sd_floor, t_ref);
    c.rest_n = rest.n;
    c.rest_slope = rest.slope;
    c.rest_curvature = rest.curvature;
    c.rest_curvature_se = rest.curvature_se;
    c.rest_drift = rest.drift;
    c.rest_critical_t = t_crit(rest.n - 3);
  }
  c.product = wt.intercept_at_t0 + wt.slope * (c.t_last_s - t_ref) - baseline;
  c.product_limit = limit_signal;
  return c;
}

}  // namespace

StartScreen screen_usable_start(Usable& u, const RateOptions& opt, double sd) {
  thread_local std::vector<double> ct, cy;  // scratch reused by each thread: once per well
  thread_local std::vector<int> cpos;
  ct.clear();
  cy.clear();
  cpos.clear();
  for (std::size_t i = 0; i < u.t.size(); ++i)
    if (!u.spike[i]) {
      ct.push_back(u.t[i]);
      cy.push_back(u.y[i]);
      cpos.push_back(static_cast<int>(i));
    }
  StartScreen st = screen_start(ct.data(), cy.data(), static_cast<int>(ct.size()), opt.min_points, sd);
  if (st.skip == 0) return st;
  // What is left of the disturbance after the reads set aside (under one read-noise SD) is
  // taken off the reads, as fitted.
  const double tau = st.decay_tau_s, t0 = ct.front();
  for (std::size_t i = 0; i < u.t.size(); ++i) u.y[i] -= st.offset * std::exp(-(u.t[i] - t0) / tau);
  st.skip = cpos[z(st.skip)];  // as a usable position
  return st;
}

WindowChoice choose_window(const Usable& u, const RateOptions& opt, double sd_floor, double limit_signal, double t_ref,
                           int first, double noise_sd) {
  WindowChoice w;
  const int m = static_cast<int>(u.t.size());
  const int p = opt.min_points;
  const std::string run_out = u.truncated_by.empty() ? "reads" : u.truncated_by;

  if (opt.window == WindowMethod::leading) {
    int last = std::min(p, m) - 1;
    while (last + 1 < m && u.t[z(last)] - u.t[0] < opt.min_span_s) ++last;
    w.first = 0;
    w.last = last;
    w.too_few = last + 1 < p || u.t[z(last)] - u.t[0] < opt.min_span_s;
    w.end = "fixed";
    return w;
  }

  // The search runs on the reads the spike screen let through.
  thread_local std::vector<double> ct, cy;  // scratch reused by each thread: once per well
  thread_local std::vector<int> cpos;
  ct.clear();
  cy.clear();
  cpos.clear();
  ct.reserve(z(m));
  cy.reserve(z(m));
  cpos.reserve(z(m));
  for (int i = 0; i < m; ++i)
    if (!u.spike[z(i)]) {
      ct.push_back(u.t[z(i)]);
      cy.push_back(u.y[z(i)]);
      cpos.push_back(i);
    }
  const int mc = static_cast<int>(ct.size());
  // Smallest end (exclusive) of a window starting at s that meets min_points and min_span_s.
  const auto min_end = [&](int s) {
    int e = s + p;
    while (e <= mc && ct[z(e - 1)] - ct[z(s)] < opt.min_span_s) ++e;
    return e;
  };
  const auto as_usable = [&](int s, int e) {
    w.first = cpos[z(s)];
    w.last = cpos[z(e - 1)];
  };
  if (mc < 2 || min_end(0) > mc) {
    w.too_few = true;
    w.end = run_out;
    if (mc >= 2)
      as_usable(0, mc);
    else {
      w.first = 0;
      w.last = m - 1;
    }
    return w;
  }
  const WindowStats stats(ct.data(), cy.data(), mc);

  if (opt.window == WindowMethod::steepest) {
    int best = 0;
    double best_slope = -INFINITY;
    for (int s = 0; min_end(s) <= mc; ++s) {
      const double b = stats.slope(s, min_end(s));
      if (b > best_slope) {
        best_slope = b;
        best = s;
      }
    }
    as_usable(best, min_end(best));
    w.end = "fixed";
    return w;
  }

  const double sd = std::max(sd_floor, std::isfinite(u.local_sd) ? u.local_sd : 0.0);
  // A disturbed start (screen_usable_start) is set aside before anything else is judged.
  int s0 = 0;
  while (s0 < mc && cpos[z(s0)] < first) ++s0;
  if (s0 > 0 && min_end(s0) > mc) s0 = 0;
  w.undisturbed = cpos[z(s0)];
  w.disturbed = s0 > 0 ? w.undisturbed : 0;
  // The trace's baseline at reaction start: the line of its first undisturbed reads there.
  const double baseline = stats.test(s0, min_end(s0), sd_floor, t_ref).intercept_at_t0;
  w.baseline = baseline;

  CriticalT t_crit(1 - opt.linearity_alpha / 2);
  const int lag_max = (mc - s0 - p) / 2;  // how far a lag may push the window's start
  int s = s0;
  double ramp_end_s = -INFINITY;  // where the lag shape says the ramp ends
  // On a short trace the spike screen's line through a read's six neighbours spans most of
  // the curve, so the curvature a lag test looks for inflates that scatter: there the
  // blanks' read noise, when known, is the yardstick; on longer traces the larger of the two
  // (the blanks' noise leaves out what their subtraction adds to the sample's).
  const bool short_trace = mc < 2 * k_neighbourhood;
  const double lag_sd = short_trace && std::isfinite(noise_sd) && noise_sd > 0 ? noise_sd : sd;
  if (opt.detect_lag) {
    s = lag_scan(stats, ct, s0, p, lag_max, lag_sd);
    // The shape also tells where a ramp ends that the block scan found but could not pass.
    if (s == s0 || s == s0 + lag_max) {
      const ShapeLag shape = lag_by_shape(stats, ct, cy, s0, p, lag_max, lag_sd, baseline, limit_signal);
      s = std::max(s, shape.start);
      ramp_end_s = shape.ramp_end_s;
    }
    w.lag = s > s0;
  }
  const std::vector<WindowRule>& rules = opt.window_rules ? *opt.window_rules : default_window_rules();
  struct Count {
    int fails = 0, sign = 0, first_fail = -1;
  };
  std::vector<Count> count(rules.size());
  int e = min_end(s), accepted = -1;
  std::string end;
  while (true) {
    if (e > mc) {
      end = run_out;
      break;
    }
    const WindowCandidate c = candidate(stats, ct, s, e, sd_floor, t_ref, baseline, limit_signal, t_crit);
    bool pass = true, moved = false;
    for (std::size_t k = 0; k < rules.size() && end.empty() && !moved; ++k) {
      const int verdict = rules[k].judge(c, opt);
      Count& n = count[k];
      if (verdict == 0) {
        n.fails = 0;
        continue;
      }
      pass = false;
      if (n.fails == 0 || verdict != n.sign)
        n = Count{1, verdict, e};
      else
        ++n.fails;
      if (n.fails < std::max(1, rules[k].confirm)) continue;
      if (verdict > 0 && rules[k].rising_is_lag && opt.detect_lag && s + 1 <= s0 + lag_max) {
        // The rate rises: skip one more read at the start.
        ++s;
        w.lag = true;
        accepted = -1;
        const int restart = std::max(n.first_fail, min_end(s));
        std::fill(count.begin(), count.end(), Count{});
        e = restart;
        moved = true;
        continue;
      }
      end = rules[k].name;
    }
    if (!end.empty()) break;
    if (moved) continue;
    if (pass) {
      accepted = e;
      std::fill(count.begin(), count.end(), Count{});
    }
    ++e;
  }
  if (accepted < 0) {
    // Not even the shortest window from s passed.
    const int e0 = std::min(min_end(s), mc);
    as_usable(s, e0);
    if (end == "conversion")
      w.depleted = true;
    else if (end == "curvature")
      w.nonlinear = true;
    else if (end == run_out)
      w.too_few = e0 - s < p;
  } else {
    as_usable(s, accepted);
    // A window whose rate still rises (a lag not over by its end, often because another
    // rule ended it early) underestimates v0: significant upward bend, as the curvature rule
    // judges it.
    const WindowCandidate c = candidate(stats, ct, s, accepted, sd_floor, t_ref, baseline, limit_signal, t_crit);
    w.rising = opt.linearity_alpha > 0 && c.curvature > 0 &&
               significant_bend(c.n, c.curvature, c.curvature_se, c.drift, c.slope, c.critical_t, opt);
    // ... or whose reads after it climb faster than it does.
    if (opt.detect_lag && !w.rising) w.rising = steeper_later(stats, s, accepted, mc, sd);
  }
  // A window that starts before the fitted lag curve has reached 95 % of its steady rate
  // sits in the ramp, however it ended.
  w.rising = w.rising || ct[z(s)] < ramp_end_s;
  w.end = end;
  return w;
}

}  // namespace vzero::detail
