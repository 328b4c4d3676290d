// Straight-line and quadratic estimators used by the rate finder, and the few
// distribution quantiles they need. Internal to the rate finder (src/rates).
//
// Every function takes parallel arrays x[0..n), y[0..n) and returns a plain struct; none
// allocates more than O(n) except theil_sen below 650 points (it forms all pairwise slopes
// there; above, O(n) memory, see pair_slopes.hpp). Results are deterministic: fixed
// summation order, and the slope selection's pseudo-random samples have fixed seeds (they
// change only its speed, never its result).
#pragma once

#include <cmath>
#include <vector>

#include "core/stats.hpp"  // LineFit, least_squares_line (the rate finder's OLS), quadratic

namespace vzero::detail {

// Theil–Sen: the median of the slopes of all pairs with x_j > x_i (pairs with equal x are
// skipped), intercept median(y − b·x). 95 % interval after Sen (1968) eq. 2.6 as in SciPy
// 1.10 `theilslopes`: σ² = [n(n−1)(2n+5) − Σ ties] / 18 over tied groups of x and of y,
// z = 1.959963984540054, low = sorted[round((N − zσ)/2) − 1], high = sorted[round((N + zσ)/2)]
// (0-based, round half to even as NumPy does, clamped into the array). SE is the interval
// half-width divided by z. `intercept_separate` receives median(y) − b·median(x) (SciPy's
// default) when not null. With `interval` false the interval and SE are skipped (NaN).
LineFit theil_sen(const double* x, const double* y, int n, double* intercept_separate = nullptr, bool interval = true);

// Huber M-estimate by iteratively reweighted least squares, exactly as MASS::rlm with
// psi.huber: start from OLS; repeat { s = median(|r|)/0.6745 (not centred);
// w = min(1, k/|r/s|); weighted LS } until √(Σ(r_old − r_new)²/max(1e-20, Σ r_old²)) ≤ tol.
// SE from Huber's asymptotic formula with the κ correction, as MASS `summary.rlm` computes
// it by default (from memory): SE² = κ²/m̄² · Σ(ψ(r/s)·s)²/(n−2) · [(XᵀX)⁻¹]₁₁,
// κ = 1 + 2·var(ψ')/(n·m̄²), m̄ = mean ψ', s the scale of the last iteration. 95 % interval slope ± t(0.975, n−2)·SE.
LineFit huber(const double* x, const double* y, int n, double k = 1.345, double tol = 1e-12, int max_iter = 500);


// Median of v (reorders v; std::nth_element). NaN for an empty vector. Even sizes give the
// mean of the two middle values, as NumPy's median.
double median_inplace(std::vector<double>& v);

}  // namespace vzero::detail
