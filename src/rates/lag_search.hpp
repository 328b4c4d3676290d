// Where a lag ends: the block scan and the lag shape, run by the window search
// (window_search.cpp) before the window grows. Internal to the rate finder (src/rates).
#pragma once

#include <cmath>
#include <vector>

#include "rates/window_stats.hpp"

namespace vzero::detail {

// The reads a lag search looks at: the screened reads' times and signals, the undisturbed
// start s0, the shortest window p, how far the start may move (lag_max reads) and the read
// noise the tests use.
struct LagSearch {
  const WindowStats& stats;
  const std::vector<double>& t;
  const std::vector<double>& y;
  int s0 = 0, p = 0, lag_max = 0;
  double sd = NAN;
};

struct LagStart {
  int start = 0;                  // first read of the window (s0 when no lag)
  double ramp_end_s = -INFINITY;  // where the fitted lag curve reaches 95 % of its rate
  // A lag the shape fits better than a line (or, with depletion, a parabola) by more than
  // k_tau_band read-noise variances (χ²₁ at 5 %) but not enough to move the window: the
  // largest τ its profile allows and the time its clock starts from (0 and NaN when none).
  double possible_tau_s = 0;
  double possible_from_s = NAN;
};

// The block scan first; when it finds nothing or cannot pass the ramp, the lag shape
// (lag_model.hpp) fitted to the reads up to four times the conversion limit `limit_signal` above
// `baseline` (window_search.cpp explains the thresholds).
LagStart find_lag(const LagSearch& q, double baseline, double limit_signal);

// A stretch after the window [s, e) of the screened reads steeper than the window itself
// (a rate that still rises after it); lag_search.cpp gives the test.
bool steeper_later(const WindowStats& stats, int s, int e, int mc, double sd);

}  // namespace vzero::detail
