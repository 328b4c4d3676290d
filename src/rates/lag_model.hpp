// A lag recognised by its shape: the progress curve of a reaction whose rate climbs
// exponentially to a steady value (a hysteretic enzyme, a coupling step catching up:
// P(t) = v·(t − τ·(1 − e^(−t/τ))), from memory; the form of Frieden's hysteretic-enzyme
// equation with no initial rate). Internal to the rate finder (src/rates).
#pragma once

#include <cmath>

namespace vzero::detail {

struct LagShape {
  double tau_s = 0;    // the time constant that fits best (0 = a straight line fits as well)
  double slope = NAN;  // its steady rate v
  double gain = 0;     // (RSS of the line − RSS of the lag curve) / sd²: how much better it fits
  // The largest τ of the grid that fits within k_tau_band read-noise variances of the best
  // (the upper end of τ's 95 % profile-likelihood interval; 0 when no τ beats the line).
  double tau_high_s = 0;
};
// χ² with one degree of freedom, 95 % quantile (3.841; common practice for a profile-
// likelihood interval of one parameter).
inline constexpr double k_tau_band = 3.841458820694124;

// The lag's stretched clock g_τ(u) = u − τ·(1 − e^(−u/τ)) (u = time since its start): the
// product of a rate that climbs to 1 with time constant τ.
inline double lag_clock(double u, double tau) { return u + tau * std::expm1(-u / tau); }

// The least-squares slope of g_τ(t − from) against t over the n times t: the fraction of the
// steady rate that a straight line through a lag curve read at those times measures (→ 1 as
// τ → 0). NaN for fewer than two distinct times.
double lag_clock_slope(const double* t, int n, double from, double tau);

// Fits y = a + v·g_τ(t − t₀), g_τ(u) = u − τ·(1 − e^(−u/τ)), by linear least squares in
// (a, v) for each τ of a log-spaced grid from half the median read interval to `tau_max_s`
// (k_lag_grid values), keeping v > 0; returns the best τ against the straight line (τ → 0).
// g is convex, so a curve that only bends down (substrate used up) never gains: the best τ
// of a concave trace stays 0. O(k_lag_grid · n).
inline constexpr int k_lag_grid = 24;
LagShape fit_lag_shape(const double* t, const double* y, int n, double sd, double tau_max_s);

// The same lag while substrate runs out: y = a + v·g − q·g², g = g_τ(t − t₀) (the progress
// curve's first two terms on the lag's stretched clock; v > 0, q ≥ 0: the rate falls as
// substrate is used), against the parabola y = a + b·u + c·u² (its τ → 0 limit). A ramp that
// a falling rate straightens (an S-shaped curve) fits no parabola but this; a curve with no
// lag gains nothing. `gain` is (RSS of the parabola − RSS of this fit) / sd². O(k_lag_grid · n).
LagShape fit_lag_depletion_shape(const double* t, const double* y, int n, double sd, double tau_max_s);

}  // namespace vzero::detail
