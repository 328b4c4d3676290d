// Disturbed start: a jump or a decay over the first reads that the rest of the trace does not
// continue (dispensing, bubbles rising, temperature settling), either sign. Shared by the rate
// finder (src/rates) and the blank screen (src/blank.cpp).
#pragma once

#include <cmath>

namespace vzero::detail {

// How the start of a trace was judged.
struct StartScreen {
  int skip = 0;              // reads at the start to set aside (0 = the start is not disturbed)
  double offset = NAN;       // fitted disturbance at the first read, signal units (NaN = not fitted)
  double z = 0;              // offset / its standard error
  int decay_reads = 0;       // the decay that fitted best: gone (to 5 %) after this many reads (1–3)
  double decay_tau_s = NAN;  // its time constant, s
};

// The first reads y[0..n) (times t, increasing) are fitted with a smooth curve
// a + b·u + c·u² (u the time since the first read: a rate that may bend, as substrate is
// used; c only when its t-value reaches k_bend_t, else a straight line) plus a disturbance d·exp(−u/τ), for τ = k·Δt/3
// with k = 1, 2, 3 reads (Δt the median read interval; after k reads 5 % of d is left), over the first max(min_points +
// 5, 12) reads. The decay with the smallest residual sum of squares is kept. The start is disturbed when |d| exceeds
// `z_cut` standard errors, the SE taken from max(`sd`, the fit's residual SD). The reads set aside are those, from the
// first, where the fitted disturbance is above one `sd`, at most 4 and never leaving fewer than `min_points` reads.
// Needs 8 reads. Callers take the fitted disturbance off the reads they keep (under one `sd` each). Closed-form least
// squares on 4 regressors; O(n) for the fixed span. The square term is kept when its t-value reaches k_bend_t;
// otherwise the smooth part is a line.
inline constexpr double k_bend_t = 3.0;
// How many of the first reads screen_start looks at: the arrays may hold just these while
// `n` counts every read (a long trace's screen need not copy it whole).
constexpr int start_screen_span(int min_points) { return min_points + 5 > 12 ? min_points + 5 : 12; }
StartScreen screen_start(const double* t, const double* y, int n, int min_points, double sd, double z_cut = 5.0);

}  // namespace vzero::detail
