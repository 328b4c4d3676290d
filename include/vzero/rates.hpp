// The rate finder: one initial rate (v0) per well trace, with the window it used, its
// uncertainty and the reasons it distrusts the result.
//
// Works on one trace at a time, in the trace's own signal units per second; the caller
// converts to concentration per minute. Pure function, no shared state: safe to call
// from many threads at once.
//
// **Example**:
//   vzero::RateOptions opt;             // defaults: see the fields
//   vzero::TraceView tr{t.data(), y.data(), nullptr, st.data(), n};
//   vzero::RateResult r = vzero::find_rate(tr, opt);
//   // r.slope in y-units per second; r.flags empty when the rate is clean
#pragma once

#include <cmath>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/run.hpp"

namespace vzero {

enum class Estimator { theil_sen, ols, huber };
std::string_view to_string(Estimator e);
bool parse_estimator(std::string_view text, Estimator& out);

// How the window of reads is chosen.
//   automatic: the longest early linear window that passes every check (the default)
//   leading:   the first `min_points` valid reads after the dead time
//   steepest:  the `min_points` consecutive valid reads with the largest slope
enum class WindowMethod { automatic, leading, steepest };
std::string_view to_string(WindowMethod m);
bool parse_window_method(std::string_view text, WindowMethod& out);

struct RateOptions {
  int min_points = 5;              // fewest reads a window may hold
  double min_span_s = 0.0;         // shortest time a window may span, seconds
  double skip_s = 0.0;             // dead time after mixing: reads before it are not used, seconds
  double max_conversion = 0.10;    // fraction of `substrate` that may be converted in the window
  double signal_ceiling = NAN;     // detector linear limit in raw signal units; NaN = none
  Estimator estimator = Estimator::theil_sen;
  WindowMethod window = WindowMethod::automatic;
  // Empty if valid, else e.g. "min_points is 1; a slope needs at least 3 reads".
  std::string validate() const;
};

// One well's trace. Pointers stay owned by the caller; all arrays have `n` entries.
struct TraceView {
  const double* time_s = nullptr;      // read times, increasing
  const double* y = nullptr;           // signal after blank, sign set so the reaction rises
  const double* raw = nullptr;         // raw signal for the ceiling check; nullptr = use y
  const ReadStatus* status = nullptr;  // per read; only ok reads are used
  int n = 0;
  double substrate = NAN;              // initial substrate concentration, same unit as conc_per_signal gives
  double conc_per_signal = NAN;        // concentration per signal unit (conversion limit); NaN = unconverted
  double noise_sd = NAN;               // read noise of the blank, signal units; NaN = estimate from residuals
};

struct RateResult {
  double slope = NAN;        // signal units per second
  double slope_se = NAN;     // standard error of slope
  double ci_low = NAN;       // 95 % interval of slope
  double ci_high = NAN;
  double intercept = NAN;    // signal at t = 0 s
  double r2 = NAN;
  int n_points = 0;          // reads in the window (outliers included)
  int n_outliers = 0;        // reads in the window rejected as outliers
  double t_start_s = NAN;
  double t_end_s = NAN;
  double conversion = NAN;   // fraction of substrate converted at the window's end; NaN if unknown
  Estimator estimator = Estimator::theil_sen;
  WindowMethod window = WindowMethod::automatic;
  std::string tangent;       // which estimate v0 is: "slope" (straight line) or another named method
  std::vector<std::string> flags;        // short words; empty = clean (documented in README)
  std::vector<std::uint8_t> used;        // per read: 1 when the read is in the window and not an outlier
};

RateResult find_rate(const TraceView& trace, const RateOptions& options);

}  // namespace vzero
