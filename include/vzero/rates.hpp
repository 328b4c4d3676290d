// The rate finder: one initial rate (v0) per well trace, with the window it used, its
// uncertainty and the reasons it distrusts the result.
//
// Works on one trace at a time, in the trace's own signal units per second; the caller
// converts to concentration per minute. Pure function, no shared state: safe to call
// from many threads at once; the same input and options give bit-identical results.
//
// How the automatic window is chosen (the README explains it in these words):
//   1. Reads that are not `ok`, reads before `skip_s`, and everything from the first read
//      that overflowed or reached `signal_ceiling` onwards are set aside. (If every read is
//      above the ceiling, they are used anyway and flagged `ceiling`.)
//   2. Spikes are kept out of the search: a read more than `outlier_k` robust SDs from the
//      Theil–Sen line through its six nearest neighbours, while those neighbours agree with
//      their line (at a sharp bend they do not, and nothing is a spike there).
//   2b. Disturbed start (`detect_disturbed`, src/core/start_screen.hpp): the first dozen
//      screened reads are fitted with a line (a parabola when its square term shows) plus a
//      disturbance decaying within 1, 2 or 3 reads; beyond 5 SE, the reads it moves by more
//      than the read noise (at most 4) are set aside and its remainder is taken off the rest.
//   3. Lag (`detect_lag`): the slopes of runs of `min_points` reads starting at each of the
//      first half of the reads are compared. If the steepest run is steeper than the first
//      by more than 4 standard errors (from `noise_sd`, else the spike screen's noise
//      estimate), the rate rises at the start: the window starts at the first run within
//      one standard error of the steepest. Gentler ramps are found by their shape
//      (src/rates/lag_model.hpp: the lag curve against a line; with a depletion term against
//      a parabola); the window then starts at 3τ, as far as the reads allow.
//   4. From there the window grows one read at a time. Each candidate is fitted with a
//      straight line and with a parabola. It is "curved" when the parabola's square term is
//      significant (two-sided t-test at `linearity_alpha`, residual SD never below
//      `noise_sd`), changes the slope across the window by more than `slope_drift` of the
//      slope, and stays so without the window's first read (mixing often disturbs it).
//      Three curved candidates in a row, bending the same way, end the growth at the last
//      straight one; one curved candidate among straight ones is noise. A window bending
//      upwards (rate rising) moves the start one read later instead (a lag the scan missed),
//      up to half the usable reads. Growth also stops before more than `max_conversion` of
//      `substrate` is converted since `time_zero_s`, read off the curve: the candidate's line
//      at its end minus the baseline at time zero (the line of the first `min_points`
//      undisturbed reads there), times conc_per_signal / substrate. These stopping rules are
//      the table `default_window_rules()` (or `window_rules`); the one that ends the window
//      is named in `window_end`. A chosen window that still bends upwards, or after which a
//      stretch of its own length climbs faster than it (3 standard errors of the difference,
//      up to 4 stretches; a reaction's rate only falls once it runs), or that starts before
//      3τ of a lag found by its shape, is flagged `rising`.
//   5. In the window, a read whose residual from the Theil–Sen line (fitted to the window's
//      reads that passed the spike screen) exceeds `outlier_k` × 1.4826 × MAD of the
//      residuals (or `noise_sd` if larger) is an outlier; the slope is then estimated from
//      the remaining reads with `estimator`.
//   6. The initial tangent (`tangent`) may replace that slope for a curving well (below).
//   7. The 95 % interval stated (ci_low, ci_high) is widened to what the data support: each
//      side at least 1.96 × read noise / √Σ(t − t̄)² of the straight line (the read noise:
//      `noise_sd`, or the well's own robust scatter where larger on 14 reads or more), then
//      t × `rate_sd` added in quadrature (t: Student's 97.5 % quantile on `rate_sd_dof`,
//      1.96 when 0); its upper side also carries the bias that the
//      substrate used by the window's middle, or a lag too weak to skip (note
//      `lag-possible`), may give a straight line. `imprecise` when either side reaches
//      further than `precision_limit` of the rate.
// Cost: the search is O(n) tests on prefix sums (n reads); Theil–Sen on the w reads of the
// window is exact, O(w log w) above 650 reads and from all w(w−1)/2 slopes below, where that
// is quicker (src/rates/pair_slopes.hpp).
//
// Flags: find_rate raises overflow, ceiling, too-few-reads, nonlinear, depleted, disturbed,
// lag, lag-possible, rising, saturated, imprecise, outliers, noise and negative. The run (src/analysis.cpp)
// sorts them by the well's role into rates.csv's `flags` (trust withheld) and `notes`
// (corrections made); their meanings are the one table of include/vzero/flags.hpp.
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

#include "vzero/enum_names.hpp"
#include "vzero/run.hpp"

namespace vzero {

enum class Estimator { theil_sen, ols, huber };
template <>
std::span<const EnumName<Estimator>> enum_names<Estimator>();  // theil-sen, ols, huber
std::string_view to_string(Estimator e);
bool parse_estimator(std::string_view text, Estimator& out);

// How the window of reads is chosen.
//   automatic: the longest early linear window that passes every check (the default)
//   leading:   the first `min_points` valid reads after the dead time
//   steepest:  the `min_points` consecutive valid reads with the largest slope
enum class WindowMethod { automatic, leading, steepest };
template <>
std::span<const EnumName<WindowMethod>> enum_names<WindowMethod>();  // auto, leading, steepest
std::string_view to_string(WindowMethod m);
bool parse_window_method(std::string_view text, WindowMethod& out);

// When v0 is the initial tangent of a parabola instead of the straight-line slope.
//   never:  always the straight-line slope of the window
//   auto:   (needs `tangent_min_reads` reads in the parabola) the tangent at time zero (`time_zero_s`) of a
//   least-squares parabola fitted to
//           the window's kept reads and the usable reads after it, up to `tangent_reach`
//           times the window's length (one pass of the outlier rule against the parabola).
//           Used only when (a) the parabola bends down significantly (one-sided t-test at
//           `tangent_alpha`) and (b) the tangent lies above the line slope by no more than
//           depletion allows: tangent ≤ slope / (1 − f), f the fraction of substrate
//           converted at the window's end (`max_conversion` when the substrate is not
//           known), since a reaction cannot slow by more than its substrate is used up.
//           Depletion makes the straight line underestimate v0 by about half the slope drop
//           across the window; the tangent removes that bias at the cost of a larger SE.
//           Not used with the steepest window.
//   always: the tangent whenever the parabola can be fitted (≥ 5 reads)
enum class TangentMode { never, automatic, always };
template <>
std::span<const EnumName<TangentMode>> enum_names<TangentMode>();  // never, auto, always
std::string_view to_string(TangentMode m);
bool parse_tangent_mode(std::string_view text, TangentMode& out);

struct WindowRule;

struct RateOptions {
  int min_points = 5;             // fewest reads a window may hold
  double min_span_s = 0.0;        // shortest time a window may span, seconds
  double skip_s = 0.0;            // dead time after mixing: reads before it are not used, seconds
  double max_conversion = 0.10;   // fraction of `substrate` that may be converted in the window
  double signal_ceiling = NAN;    // detector linear limit in raw signal units; NaN = none
  double absorbance_limit = 1.5;  // AU: absorbance channels' ceiling is the lower of this and signal_ceiling
                                  // (applied by the pipeline, src/analysis.cpp; not by find_rate)
  Estimator estimator = Estimator::theil_sen;
  WindowMethod window = WindowMethod::automatic;
  double linearity_alpha = 0.01;  // significance level of the curvature test; 0 = no test
  double slope_drift = 0.02;      // curvature matters only above this fractional slope change
  bool detect_lag = true;         // skip an initial stretch where the rate rises
  double outlier_k = 4.0;         // outlier cut in robust SDs (1.4826·MAD) of the residuals
  double lod_factor = 3.0;        // limit of detection in blank-noise slope SDs (`noise` flag)
  double time_zero_s = NAN;       // when the reaction started on the trace clock; NaN = first read
  TangentMode tangent = TangentMode::automatic;
  double tangent_reach = 4.0;     // parabola window length as a multiple of the line window
  double tangent_alpha = 0.05;    // one-sided significance the parabola's bend needs (tangent = auto)
  int tangent_min_reads = 10;     // fewest reads the parabola needs before its tangent may be used (tangent = auto)
  bool detect_disturbed = true;   // set aside a disturbed start (a jump or decay over the first reads)
  double precision_limit = 0.15;  // either side of the 95 % interval beyond this fraction of the rate: `imprecise`; 0 = none
  const std::vector<WindowRule>* window_rules = nullptr;  // the window search's rules; nullptr = default_window_rules()
};

// One candidate window as the window search's rules see it: the reads from the window's
// start up to the one the search is about to add.
struct WindowCandidate {
  int n = 0;  // reads in it (reads the spike screen held out not counted)
  double t_first_s = NAN, t_last_s = NAN;
  double slope = NAN;         // least-squares slope, signal units per second
  double curvature = NAN;     // square term c2 of the least-squares parabola; NaN below 4 reads
  double curvature_se = NAN;  // its SE (residual SD never below the read noise)
  double drift = NAN;         // slope change across the window the parabola implies, 2·c2·(span)
  double critical_t = NAN;    // two-sided t at `linearity_alpha` for n − 3 degrees of freedom
  int rest_n = 0;             // the same four without the window's first read
  double rest_slope = NAN, rest_curvature = NAN, rest_curvature_se = NAN, rest_drift = NAN, rest_critical_t = NAN;
  double product = NAN;        // signal formed since reaction start at t_last_s, from the curve
  double product_limit = NAN;  // signal the conversion limit allows; NaN = no limit
};

// A window rule: one entry in the table of rules the window search applies, in order, to
// every candidate. `judge` gives 0 when the candidate passes, +1 or −1 when it fails (the
// sign tells which way the trace bends, where that matters). A rule ends the window, at the
// last candidate every rule passed, after `confirm` consecutive failures of the same sign;
// with `rising_is_lag`, confirmed +1 failures move the window's start one read later instead
// (a lag), while the lag check is on. Its `name` is reported as what ended the window
// (RateResult::window_end).
struct WindowRule {
  std::string name;
  int confirm = 1;
  bool rising_is_lag = false;
  int (*judge)(const WindowCandidate&, const RateOptions&) = nullptr;
};
// The default table: "conversion" (product > limit), then "curvature" (three in a row).
const std::vector<WindowRule>& default_window_rules();

// One well's trace. Pointers stay owned by the caller; all arrays have `n` entries.
struct TraceView {
  const double* time_s = nullptr;      // read times, increasing
  const double* y = nullptr;           // signal after blank, sign set so the reaction rises
  const double* raw = nullptr;         // raw signal for the ceiling check; nullptr = use y
  const ReadStatus* status = nullptr;  // per read; only ok reads are used
  int n = 0;
  double substrate = NAN;        // initial substrate concentration, same unit as conc_per_signal gives
  double conc_per_signal = NAN;  // concentration per signal unit (conversion limit); NaN = unconverted
  double noise_sd = NAN;         // read noise of the blank, signal units; NaN = estimate from residuals
  double rate_sd = NAN;          // how far apart wells' rates lie that read noise does not explain (the
                                 // blank wells' own rates scatter: well-to-well drift), signal units per
                                 // second; no rate is known better than this. NaN = none known
  int rate_sd_dof = 0;           // degrees of freedom rate_sd was estimated on: the interval takes Student's
                                 // t quantile on them for it (0 = known exactly: the normal quantile)
};

struct RateResult {
  double slope = NAN;     // v0 estimate, signal units per second (the line or the tangent)
  double slope_se = NAN;  // standard error of slope
  double ci_low = NAN;    // 95 % interval of slope
  double ci_high = NAN;
  double intercept = NAN;  // signal at t = 0 s of the straight line
  double r2 = NAN;         // of the straight line on the reads used
  int n_points = 0;        // reads in the straight-line window (outliers included)
  int n_outliers = 0;      // reads rejected as outliers in the window (and, when v0 is the
                           // parabola's tangent, in the parabola's window)
  double t_start_s = NAN;
  double t_end_s = NAN;
  double conversion = NAN;  // fraction of substrate converted at the window's end; NaN if unknown
  Estimator estimator = Estimator::theil_sen;
  WindowMethod window = WindowMethod::automatic;
  std::string tangent;             // which estimate `slope` is: "slope" (straight line) or "parabola" (initial tangent)
  std::vector<std::string> flags;  // short words; empty = clean (documented above)
  std::vector<std::uint8_t> used;  // per read: 1 when v0 rests on it (in the window, or the
                                   // parabola's window when the tangent is used; not an outlier)

  // Detail for the audit trail.
  double line_slope = NAN;  // straight-line slope of the window with `estimator`
  double line_slope_se = NAN;
  double tangent_slope = NAN;  // initial tangent of the parabola; NaN when not fitted
  double tangent_se = NAN;
  double tangent_end_s = NAN;     // last read of the parabola's window
  double lag_s = NAN;             // time skipped as lag (start of window − first undisturbed read); 0 when none
  int disturbed_reads = 0;        // reads set aside at the start as a disturbed start
  double disturbed_offset = NAN;  // the disturbance fitted at the first read the spike screen kept, signal
                                  // units (NaN = not fitted)
  double noise_sd = NAN;          // read noise SD used for the tests (given, or robust estimate)
  std::string window_end;         // what ended the window: curvature, conversion, ceiling, overflow,
                                  // reads (ran out), fixed (leading/steepest)
};

RateResult find_rate(const TraceView& trace, const RateOptions& options);

}  // namespace vzero
