// The automatic window search: disturbed start, lag scan, and growth under the table of
// window rules (include/vzero/rates.hpp explains it in words).
#include <algorithm>

#include "core/start_screen.hpp"
#include "core/stats.hpp"
#include "rates/lag_search.hpp"
#include "rates/rate_window.hpp"
#include "rates/window_stats.hpp"

namespace vzero {
namespace {

// A window ends (or its start moves) on curvature only when it shows in this many
// consecutive candidates: one significant test in a long sequence of tests is expected by
// chance, three in a row are not.
constexpr int k_confirm = 3;
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

// The reads the spike screen let through (times, signals, usable positions), in scratch
// each thread reuses from well to well, and the smallest window the options allow.
struct Screened {
  const std::vector<double>& t;
  const std::vector<double>& y;
  const std::vector<int>& pos;
  int n = 0, p = 0;
  double min_span_s = 0;
  // Smallest end (exclusive) of a window starting at s that meets min_points and min_span_s.
  int min_end(int s) const {
    int e = s + p;
    while (e <= n && t[z(e - 1)] - t[z(s)] < min_span_s) ++e;
    return e;
  }
  // The window [s, e) of the screened reads, as usable positions.
  void place(WindowChoice& w, int s, int e) const {
    w.first = pos[z(s)];
    w.last = pos[z(e - 1)];
  }
};

Screened screened_reads(const Usable& u, const RateOptions& opt) {
  thread_local std::vector<double> ct, cy;  // scratch reused by each thread: once per well
  thread_local std::vector<int> cpos;
  const int m = static_cast<int>(u.t.size());
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
  return {ct, cy, cpos, static_cast<int>(ct.size()), opt.min_points, opt.min_span_s};
}

// --window leading: the first min_points reads, stretched to min_span_s.
WindowChoice leading_window(const Usable& u, const RateOptions& opt) {
  WindowChoice w;
  const int m = static_cast<int>(u.t.size());
  const int p = opt.min_points;
  int last = std::min(p, m) - 1;
  while (last + 1 < m && u.t[z(last)] - u.t[0] < opt.min_span_s) ++last;
  w.first = 0;
  w.last = last;
  w.too_few = last + 1 < p || u.t[z(last)] - u.t[0] < opt.min_span_s;
  w.end = "fixed";
  return w;
}

// Too few screened reads for the shortest window: all of them, flagged.
WindowChoice too_short_window(const Usable& u, const Screened& r, const std::string& run_out) {
  WindowChoice w;
  w.too_few = true;
  w.end = run_out;
  if (r.n >= 2)
    r.place(w, 0, r.n);
  else {
    w.first = 0;
    w.last = static_cast<int>(u.t.size()) - 1;
  }
  return w;
}

// --window steepest: the shortest window with the largest slope.
WindowChoice steepest_window(const WindowStats& stats, const Screened& r) {
  WindowChoice w;
  int best = 0;
  double best_slope = -INFINITY;
  for (int s = 0; r.min_end(s) <= r.n; ++s) {
    const double b = stats.slope(s, r.min_end(s));
    if (b > best_slope) {
      best_slope = b;
      best = s;
    }
  }
  r.place(w, best, r.min_end(best));
  w.end = "fixed";
  return w;
}

// What the automatic search works with once the start and the baseline are known.
struct Search {
  const WindowStats& stats;
  const Screened& r;
  const RateOptions& opt;
  double sd_floor, t_ref, baseline, limit_signal;
  CriticalT& t_crit;

  // The candidate [s, e) of the screened reads as the rules see it. The rest_* fields (the
  // window without its first read) are filled when `with_rest` is true; the built-in curvature
  // rule reads them only after the whole window's bend was significant (bend_matters).
  WindowCandidate candidate(int s, int e, bool with_rest = true) const {
    WindowCandidate c;
    const WindowTest wt = stats.test(s, e, sd_floor, t_ref);
    c.n = wt.n;
    c.t_first_s = r.t[z(s)];
    c.t_last_s = r.t[z(e - 1)];
    c.slope = wt.slope;
    c.curvature = wt.curvature;
    c.curvature_se = wt.curvature_se;
    c.drift = wt.drift;
    c.critical_t = t_crit(wt.n - 3);
    if (with_rest) add_rest(c, s, e);
    c.product = wt.intercept_at_t0 + wt.slope * (c.t_last_s - t_ref) - baseline;
    c.product_limit = limit_signal;
    return c;
  }

  // The rest_* fields of candidate [s, e): the window without its first read.
  void add_rest(WindowCandidate& c, int s, int e) const {
    if (e - s - 1 < 2) return;
    const WindowTest rest = stats.test(s + 1, e, sd_floor, t_ref);
    c.rest_n = rest.n;
    c.rest_slope = rest.slope;
    c.rest_curvature = rest.curvature;
    c.rest_curvature_se = rest.curvature_se;
    c.rest_drift = rest.drift;
    c.rest_critical_t = t_crit(rest.n - 3);
  }
};

// Where the window grew to: its start (moved on when the rules saw the rate rise), the
// last end every rule accepted (-1 = not even the shortest window) and the rule that ended
// the growth (or the reason the reads ran out).
struct Growth {
  int start = 0, accepted = -1;
  bool lag = false;  // the rules moved the start
  std::string end;
};

// The window grows one read at a time from [s, min_end(s)) under the rules (rates.hpp). A
// rule ends it after `confirm` consecutive verdicts of one sign; a rising verdict of a rule
// that reads rising as lag instead moves the start one read on (at most to s0 + lag_max)
// and the growth resumes where that rule first objected.
Growth grow_window(const Search& q, int s, int s0, int lag_max, const std::string& run_out) {
  const RateOptions& opt = q.opt;
  const std::vector<WindowRule>& rules = opt.window_rules ? *opt.window_rules : default_window_rules();
  const bool custom_rules = opt.window_rules != nullptr;
  struct Count {
    int fails = 0, sign = 0, first_fail = -1;
  };
  thread_local std::vector<Count> count;  // once per well: the storage kept per thread
  count.assign(rules.size(), Count{});
  Growth g;
  int e = q.r.min_end(s);
  while (true) {
    if (e > q.r.n) {
      g.end = run_out;
      break;
    }
    // With the built-in rules the window without its first read matters only once the whole
    // window bends significantly (curvature_rule): it is measured then, not for every candidate.
    WindowCandidate c = q.candidate(s, e, custom_rules);
    if (!custom_rules && opt.linearity_alpha > 0 &&
        significant_bend(c.n, c.curvature, c.curvature_se, c.drift, c.slope, c.critical_t, opt))
      q.add_rest(c, s, e);
    bool pass = true, moved = false;
    for (std::size_t k = 0; k < rules.size() && g.end.empty() && !moved; ++k) {
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
        g.lag = true;
        g.accepted = -1;
        const int restart = std::max(n.first_fail, q.r.min_end(s));
        std::fill(count.begin(), count.end(), Count{});
        e = restart;
        moved = true;
        continue;
      }
      g.end = rules[k].name;
    }
    if (!g.end.empty()) break;
    if (moved) continue;
    if (pass) {
      g.accepted = e;
      std::fill(count.begin(), count.end(), Count{});
    }
    ++e;
  }
  g.start = s;
  return g;
}

// The chosen window and its flags from where the growth stopped; `ramp_end_s` is where the
// lag shape says the ramp ends, `sd` the read noise of the later-rise test.
void finish_window(WindowChoice& w, const Search& q, const Growth& g, double ramp_end_s, double sd,
                   const std::string& run_out) {
  const Screened& r = q.r;
  const int s = g.start;
  if (g.accepted < 0) {
    // Not even the shortest window from s passed.
    const int e0 = std::min(r.min_end(s), r.n);
    r.place(w, s, e0);
    if (g.end == "conversion")
      w.depleted = true;
    else if (g.end == "curvature")
      w.nonlinear = true;
    else if (g.end == run_out)
      w.too_few = e0 - s < r.p;
  } else {
    r.place(w, s, g.accepted);
    // A window whose rate still rises (a lag not over by its end, often because another
    // rule ended it early) underestimates v0: significant upward bend, as the curvature rule
    // judges it.
    const WindowCandidate c = q.candidate(s, g.accepted, false);  // the whole window's bend only
    w.rising = q.opt.linearity_alpha > 0 && c.curvature > 0 &&
               significant_bend(c.n, c.curvature, c.curvature_se, c.drift, c.slope, c.critical_t, q.opt);
    // ... or whose reads after it climb faster than it does.
    if (q.opt.detect_lag && !w.rising) w.rising = steeper_later(q.stats, s, g.accepted, r.n, sd);
  }
  // A window that starts before the fitted lag curve has reached 95 % of its steady rate
  // sits in the ramp, however it ended.
  w.rising = w.rising || r.t[z(s)] < ramp_end_s;
  w.end = g.end;
}

}  // namespace

StartScreen screen_usable_start(Usable& u, const RateOptions& opt, double sd, double noise_sd) {
  thread_local std::vector<double> ct, cy;  // scratch reused by each thread: once per well
  thread_local std::vector<int> cpos;
  ct.clear();
  cy.clear();
  cpos.clear();
  // The screen fits only its first reads (start_screen_span); the rest are counted.
  const auto reach = static_cast<std::size_t>(start_screen_span(opt.min_points));
  int n = 0;
  for (std::size_t i = 0; i < u.t.size(); ++i)
    if (!u.spike[i] || i < 3) {
      ++n;
      if (ct.size() == reach) continue;
      ct.push_back(u.t[i]);
      cy.push_back(u.y[i]);
      cpos.push_back(static_cast<int>(i));
    }
  StartScreen st = screen_start(ct.data(), cy.data(), n, opt.min_points, sd);
  // On a short trace the local scatter carries the disturbance itself: a start found only
  // against the blanks' read noise counts when its reads dip below the trace (in the
  // reaction's direction). One that sits above could be a lag's ramp, whose curve is the same
  // decaying offset, so it is left to the lag tests.
  if (st.skip == 0 && n < 2 * k_neighbourhood && noise_sd > 0 && noise_sd < sd) {
    const StartScreen quiet = screen_start(ct.data(), cy.data(), n, opt.min_points, noise_sd);
    if (quiet.skip > 0 && quiet.offset < 0) st = quiet;
  }
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
  if (opt.window == WindowMethod::leading) return leading_window(u, opt);
  const std::string run_out = u.truncated_by.empty() ? "reads" : u.truncated_by;
  // The search runs on the reads the spike screen let through.
  const Screened r = screened_reads(u, opt);
  if (r.n < 2 || r.min_end(0) > r.n) return too_short_window(u, r, run_out);
  const WindowStats stats(r.t.data(), r.y.data(), r.n);
  if (opt.window == WindowMethod::steepest) return steepest_window(stats, r);

  WindowChoice w;
  const double sd = std::max(sd_floor, std::isfinite(u.local_sd) ? u.local_sd : 0.0);
  // A disturbed start (screen_usable_start) is set aside before anything else is judged.
  int s0 = 0;
  while (s0 < r.n && r.pos[z(s0)] < first) ++s0;
  if (s0 > 0 && r.min_end(s0) > r.n) s0 = 0;
  w.undisturbed = r.pos[z(s0)];
  w.disturbed = s0 > 0 ? w.undisturbed : 0;
  // The trace's baseline at reaction start: the line of its first undisturbed reads there.
  w.baseline = stats.test(s0, r.min_end(s0), sd_floor, t_ref).intercept_at_t0;

  const int lag_max = (r.n - s0 - r.p) / 2;  // how far a lag may push the window's start
  // On a short trace the spike screen's line through a read's six neighbours spans most of
  // the curve, so the curvature a lag test looks for inflates that scatter: there the
  // blanks' read noise, when known, is the yardstick; on longer traces the larger of the two
  // (the blanks' noise leaves out what their subtraction adds to the sample's).
  const bool short_trace = r.n < 2 * k_neighbourhood;
  const double lag_sd = short_trace && std::isfinite(noise_sd) && noise_sd > 0 ? noise_sd : sd;
  LagStart lag{s0, -INFINITY};
  if (opt.detect_lag) {
    lag = find_lag(LagSearch{stats, r.t, r.y, s0, r.p, lag_max, lag_sd}, w.baseline, limit_signal);
    w.lag = lag.start > s0;
  }
  CriticalT t_crit(1 - opt.linearity_alpha / 2);
  const Search q{stats, r, opt, sd_floor, t_ref, w.baseline, limit_signal, t_crit};
  const Growth g = grow_window(q, lag.start, s0, lag_max, run_out);
  w.lag = w.lag || g.lag;
  if (!w.lag) {
    w.possible_lag_tau_s = lag.possible_tau_s;
    w.possible_lag_from_s = lag.possible_from_s;
  }
  finish_window(w, q, g, lag.ramp_end_s, sd, run_out);
  return w;
}

}  // namespace vzero::detail
