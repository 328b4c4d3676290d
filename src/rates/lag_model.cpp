#include "rates/lag_model.hpp"

#include <algorithm>
#include <array>
#include <cstring>
#include <utility>
#include <vector>

#include "core/stats.hpp"

namespace vzero::detail {
namespace {

// RSS and slope of y on x with an intercept; NaN slope when x does not vary.
struct Regress {
  double slope = NAN, rss = NAN;
};
Regress regress(const double* x, const double* y, int n) {
  double mx = 0, my = 0;
  for (int i = 0; i < n; ++i) {
    mx += x[i];
    my += y[i];
  }
  mx /= n;
  my /= n;
  double sxx = 0, sxy = 0, syy = 0;
  for (int i = 0; i < n; ++i) {
    const double dx = x[i] - mx, dy = y[i] - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  Regress r;
  if (!(sxx > 0)) return r;
  r.slope = sxy / sxx;
  r.rss = std::max(0.0, syy - sxy * r.slope);
  return r;
}

// RSS and coefficients of y on x and x² with an intercept (x scaled by `scale` for
// conditioning; the coefficients are in scaled units); NaN when the two do not vary apart.
// In two parts: what depends on x only (Design2: its centred u and u², u = x / scale, and
// their sums of squares and products), which the wells of a plate share, and the sums with
// y (Centred: y less its mean, and its sum of squares), which every τ of a well shares. Each
// sum is accumulated in index order, as one two-pass regression would.
struct Regress2 {
  double b1 = NAN, b2 = NAN, rss = NAN;
};
struct Design2 {
  std::vector<double> d1, d2;  // u − mean(u), u² − mean(u²)
  double s11 = 0, s12 = 0, s22 = 0;
};
// The means of u = x / scale and of u².
std::pair<double, double> scaled_means(const double* x, int n, double scale) {
  double m1 = 0, m2 = 0;
  for (int i = 0; i < n; ++i) {
    const double u = x[i] / scale;
    m1 += u;
    m2 += u * u;
  }
  return {m1 / n, m2 / n};
}
// The coefficients and RSS from the centred sums.
Regress2 solve2(double s11, double s12, double s22, double s1y, double s2y, double syy) {
  const double det = s11 * s22 - s12 * s12;
  Regress2 r;
  if (!(det > 1e-12 * s11 * s22)) return r;
  r.b1 = (s22 * s1y - s12 * s2y) / det;
  r.b2 = (s11 * s2y - s12 * s1y) / det;
  r.rss = std::max(0.0, syy - r.b1 * s1y - r.b2 * s2y);
  return r;
}
void design2(const double* x, int n, double scale, Design2& d) {
  const auto [m1, m2] = scaled_means(x, n, scale);
  d.d1.resize(static_cast<std::size_t>(n));
  d.d2.resize(static_cast<std::size_t>(n));
  d.s11 = d.s12 = d.s22 = 0;
  for (int i = 0; i < n; ++i) {
    const double u = x[i] / scale;
    const double d1 = u - m1, d2 = u * u - m2;
    d.d1[static_cast<std::size_t>(i)] = d1;
    d.d2[static_cast<std::size_t>(i)] = d2;
    d.s11 += d1 * d1;
    d.s12 += d1 * d2;
    d.s22 += d2 * d2;
  }
}
struct Centred {
  std::vector<double> dy;  // y − mean(y)
  double syy = 0;
};
void centre(const double* y, int n, Centred& c) {
  double my = 0;
  for (int i = 0; i < n; ++i) my += y[i];
  my /= n;
  c.dy.resize(static_cast<std::size_t>(n));
  c.syy = 0;
  for (int i = 0; i < n; ++i) {
    const double dy = y[i] - my;
    c.dy[static_cast<std::size_t>(i)] = dy;
    c.syy += dy * dy;
  }
}
// The same regression in one go, for a stretch whose design is not kept (its sums
// accumulated in the same order, so the same numbers).
Regress2 regress2_direct(const double* x, const Centred& c, double scale) {
  const int n = static_cast<int>(c.dy.size());
  const auto [m1, m2] = scaled_means(x, n, scale);
  double s11 = 0, s12 = 0, s22 = 0, s1y = 0, s2y = 0;
  for (int i = 0; i < n; ++i) {
    const double u = x[i] / scale;
    const double d1 = u - m1, d2 = u * u - m2, dy = c.dy[static_cast<std::size_t>(i)];
    s11 += d1 * d1;
    s12 += d1 * d2;
    s22 += d2 * d2;
    s1y += d1 * dy;
    s2y += d2 * dy;
  }
  return solve2(s11, s12, s22, s1y, s2y, c.syy);
}

Regress2 regress2(const Design2& d, const Centred& c) {
  double s1y = 0, s2y = 0;
  for (std::size_t i = 0; i < c.dy.size(); ++i) {
    s1y += d.d1[i] * c.dy[i];
    s2y += d.d2[i] * c.dy[i];
  }
  return solve2(d.s11, d.s12, d.s22, s1y, s2y, c.syy);
}

// Half the median read interval: the shortest τ the reads can tell from a step.
double tau_floor(const double* t, int n) {
  thread_local std::vector<double> steps;
  steps.clear();
  for (int i = 1; i < n; ++i) steps.push_back(t[i] - t[i - 1]);
  std::nth_element(steps.begin(), steps.begin() + static_cast<std::ptrdiff_t>(steps.size() / 2), steps.end());
  return 0.5 * steps[steps.size() / 2];
}

// The clocks both shape fits regress on, for one stretch of read times: u = t − t₀ and, for
// each τ of the grid, g_τ(u) = u + τ·expm1(−u/τ). Each value depends on its read's time, the
// first read's and the grid (τ_min from the times, τ_max given) only, and the wells of a
// plate mostly share them (the same reads from the same start; stretches of different
// lengths, some with a spike's read left out). So each thread keeps, for its last few
// (t₀, grid), the values of every read time it has met, in increasing time, and copies a
// read's values when its time matches one kept bit for bit (computing only the others): the
// same numbers as computing them afresh, without most of the k_lag_grid · n expm1 calls.
struct ClockTable {
  double t0 = NAN, tau_min = NAN, tau_max = NAN;
  std::vector<double> tau;                                                            // the grid
  std::vector<double> t;                                                              // read times met, increasing
  std::vector<std::vector<double>> g = std::vector<std::vector<double>>(k_lag_grid);  // g_τ(t − t₀), a row a τ
};

// The clocks of one stretch t[0..n): u, and g for each τ of the grid (a row a τ).
struct Clocks {
  const std::vector<double>* tau = nullptr;
  std::vector<double> u;
  std::vector<std::vector<double>> g = std::vector<std::vector<double>>(k_lag_grid);
};

bool same_bits(double a, double b) { return std::memcmp(&a, &b, sizeof(double)) == 0; }

ClockTable& table_for(double t0, double tau_min, double tau_max) {
  constexpr int k_tables = 4;
  thread_local std::vector<ClockTable> tables(k_tables);
  thread_local int next = 0;
  for (ClockTable& tb : tables)
    if (same_bits(tb.t0, t0) && same_bits(tb.tau_min, tau_min) && same_bits(tb.tau_max, tau_max)) return tb;
  ClockTable& tb = tables[static_cast<std::size_t>(next)];
  next = (next + 1) % k_tables;
  tb.t0 = t0;
  tb.tau_min = tau_min;
  tb.tau_max = tau_max;
  tb.t.clear();
  for (auto& row : tb.g) row.clear();
  tb.tau.resize(k_lag_grid);
  for (int k = 0; k < k_lag_grid; ++k)
    tb.tau[static_cast<std::size_t>(k)] =
        tau_min * std::pow(tau_max / tau_min, k / static_cast<double>(k_lag_grid - 1));
  return tb;
}

// The clocks of t[0..n) for τ from tau_min to tau_max (tau_max > tau_min > 0).
const Clocks& clocks_for(const double* t, int n, double tau_min, double tau_max) {
  thread_local Clocks c;
  ClockTable& tb = table_for(t[0], tau_min, tau_max);
  const std::size_t kg = tb.tau.size();
  c.tau = &tb.tau;
  c.u.resize(static_cast<std::size_t>(n));
  for (auto& row : c.g) row.resize(static_cast<std::size_t>(n));
  std::size_t j = 0;
  for (int i = 0; i < n; ++i) {
    const auto ui = static_cast<std::size_t>(i);
    const double u = t[i] - t[0];
    c.u[ui] = u;
    while (j < tb.t.size() && tb.t[j] < t[i]) ++j;
    if (j < tb.t.size() && same_bits(tb.t[j], t[i])) {
      for (std::size_t k = 0; k < kg; ++k) c.g[k][ui] = tb.g[k][j];
      continue;
    }
    for (std::size_t k = 0; k < kg; ++k) c.g[k][ui] = lag_clock(u, tb.tau[k]);
    if (j == tb.t.size()) {  // past every time kept: keep it (the times stay increasing)
      tb.t.push_back(t[i]);
      for (std::size_t k = 0; k < kg; ++k) tb.g[k].push_back(c.g[k][ui]);
      ++j;
    }
  }
  return c;
}

}  // namespace

// The designs of fit_lag_depletion_shape for one stretch of read times (the parabola's on u,
// then one a τ of the grid), kept per thread for the next wells: they depend on the times
// and τ_max only, and the wells of a plate mostly share their read times. Each thread keeps
// the designs of the last k_kept_designs stretches of up to k_kept_reads reads it met
// (replaced in turn) and uses them when the times and τ_max match bit for bit: the same times
// give the same designs.
struct Designs2 {
  std::vector<double> t;  // the read times they are for (the key, with tau_max)
  double tau_max = NAN;
  std::vector<double> tau;  // the grid
  std::vector<Design2> d = std::vector<Design2>(k_lag_grid + 1);
};
constexpr std::size_t k_kept_designs = 8;
constexpr int k_kept_reads = 256;  // longer stretches are fitted in one go (few wells share them)

const Designs2& designs_for(const double* t, int n, double tau_min, double tau_max_s, double scale) {
  thread_local std::vector<Designs2> kept(k_kept_designs);
  thread_local std::size_t next = 0;
  const auto un = static_cast<std::size_t>(n);
  for (const Designs2& d : kept)
    if (d.t.size() == un && same_bits(d.tau_max, tau_max_s) && std::memcmp(d.t.data(), t, un * sizeof(double)) == 0)
      return d;
  Designs2& designs = kept[next];
  next = (next + 1) % k_kept_designs;
  const Clocks& c = clocks_for(t, n, tau_min, tau_max_s);
  design2(c.u.data(), n, scale, designs.d[0]);
  for (int k = 0; k < k_lag_grid; ++k)
    design2(c.g[static_cast<std::size_t>(k)].data(), n, scale, designs.d[static_cast<std::size_t>(k) + 1]);
  designs.tau = *c.tau;
  designs.t.assign(t, t + n);
  designs.tau_max = tau_max_s;
  return designs;
}

namespace {

// The largest τ of the grid (ascending) whose fit's RSS lies within k_tau_band · sd² of the
// best; 0 when no τ beat the straight fit.
double tau_high(const std::array<double, k_lag_grid>& rss, const std::vector<double>& grid, const LagShape& best,
                double best_rss, double sd) {
  if (!(best.tau_s > 0)) return 0;
  double high = best.tau_s;
  for (int k = 0; k < k_lag_grid; ++k)
    if (rss[static_cast<std::size_t>(k)] <= best_rss + k_tau_band * sd * sd)
      high = std::max(high, grid[static_cast<std::size_t>(k)]);
  return high;
}

}  // namespace

LagShape fit_lag_depletion_shape(const double* t, const double* y, int n, double sd, double tau_max_s) {
  LagShape best;
  if (n < 7 || !(sd > 0)) return best;
  const double tau_min = tau_floor(t, n);
  const double scale = t[n - 1] - t[0];
  if (!(tau_min > 0) || !(tau_max_s > tau_min) || !(scale > 0)) return best;
  thread_local Centred centred;
  centre(y, n, centred);
  // A short stretch's designs are kept for the next wells; a long one's worked in one go.
  const bool kept = n <= k_kept_reads;
  const Designs2* designs = kept ? &designs_for(t, n, tau_min, tau_max_s, scale) : nullptr;
  const Clocks* clocks = kept ? nullptr : &clocks_for(t, n, tau_min, tau_max_s);
  const auto fit = [&](int k) {  // k = 0: the parabola; k ≥ 1: τ number k − 1 of the grid
    if (kept) return regress2(designs->d[static_cast<std::size_t>(k)], centred);
    return regress2_direct(k == 0 ? clocks->u.data() : clocks->g[static_cast<std::size_t>(k) - 1].data(), centred,
                           scale);
  };
  const std::vector<double>& grid = kept ? designs->tau : *clocks->tau;
  const Regress2 parabola = fit(0);
  if (!std::isfinite(parabola.rss)) return best;
  double best_rss = parabola.rss;
  std::array<double, k_lag_grid> rss;
  for (int k = 0; k < k_lag_grid; ++k) {
    const Regress2 r = fit(k + 1);
    // A rate that rises with the clock is the plain lag curve's business (fit_lag_shape).
    const bool valid = r.b1 > 0 && r.b2 <= 0;
    rss[static_cast<std::size_t>(k)] = valid ? r.rss : INFINITY;
    if (!valid || !(r.rss < best_rss)) continue;
    best_rss = r.rss;
    best.tau_s = grid[static_cast<std::size_t>(k)];
    best.slope = r.b1 / scale;
  }
  best.gain = (parabola.rss - best_rss) / (sd * sd);
  best.tau_high_s = tau_high(rss, grid, best, best_rss, sd);
  return best;
}

LagShape fit_lag_shape(const double* t, const double* y, int n, double sd, double tau_max_s) {
  LagShape best;
  if (n < 6 || !(sd > 0)) return best;
  const double tau_min = tau_floor(t, n);
  if (!(tau_min > 0) || !(tau_max_s > tau_min)) return best;
  const Clocks& c = clocks_for(t, n, tau_min, tau_max_s);
  const Regress line = regress(c.u.data(), y, n);
  if (!std::isfinite(line.rss)) return best;
  double best_rss = line.rss;
  std::array<double, k_lag_grid> rss;
  for (int k = 0; k < k_lag_grid; ++k) {
    const Regress r = regress(c.g[static_cast<std::size_t>(k)].data(), y, n);
    rss[static_cast<std::size_t>(k)] = r.slope > 0 ? r.rss : INFINITY;
    if (r.slope > 0 && r.rss < best_rss) {
      best_rss = r.rss;
      best.tau_s = (*c.tau)[static_cast<std::size_t>(k)];
      best.slope = r.slope;
    }
  }
  best.gain = (line.rss - best_rss) / (sd * sd);
  best.tau_high_s = tau_high(rss, *c.tau, best, best_rss, sd);
  return best;
}

double lag_clock_slope(const double* t, int n, double from, double tau) {
  thread_local std::vector<double> g;  // scratch reused by each thread
  g.clear();
  for (int i = 0; i < n; ++i) g.push_back(lag_clock(t[i] - from, tau));
  return least_squares_line(t, g.data(), n).slope;
}

}  // namespace vzero::detail
