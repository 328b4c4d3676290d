// Steps of the rate finder (src/rates.cpp): which reads are usable, the spike screen, the
// window search and the initial tangent. Internal to the rate finder (src/rates).
#pragma once

#include <string>
#include <vector>

#include "core/start_screen.hpp"
#include "vzero/rates.hpp"

namespace vzero::detail {

// The reads a window may use, in time order: status ok, finite, not before skip_s, and
// before the first overflow or ceiling read that follows a usable read.
struct Usable {
  std::vector<int> idx;        // index of each usable read in the trace
  std::vector<double> t, y;    // its time and signal
  std::vector<char> spike;     // 1 when the spike screen holds the read out of the search
  double local_sd = NAN;       // robust read-noise SD from the spike screen (NaN below 6 reads)
  bool any_overflow = false;   // an overflow read anywhere in the trace
  bool any_ceiling = false;    // an ok read at or above the ceiling anywhere in the trace
  bool any_saturated = false;  // an ok read at the detector's plateau (`clip`) anywhere in the trace
  std::string truncated_by;    // "overflow", "ceiling", "saturated" or empty
};
// `clip` (NaN = none): the detector's plateau level; reads at or above it are treated like
// ceiling reads (the window stops before them), named "saturated".
Usable usable_reads(const TraceView& tr, const RateOptions& opt, double clip = NAN);
// The same into `u`, whose vectors keep their storage (the rate finder keeps one per thread);
// every field is set as usable_reads sets it.
void usable_reads_into(const TraceView& tr, const RateOptions& opt, double clip, Usable& u);

// The spike screen (src/rates/spike_screen.cpp): u.spike[i] = 1 for a read more than `k`
// robust SDs off the Theil–Sen line through its six nearest other reads, and u.local_sd
// (the robust SD, bounded below by `floor` where it is compared).
void screen_spikes(Usable& u, double k, double floor);

// The detector's plateau: the highest level of the ok reads when two or more reads sit
// exactly at it (a clipped reading) and the trace also overflows, or that level is at or
// above `signal_ceiling`. NaN when there is none.
double detector_plateau(const TraceView& tr, const RateOptions& opt);

// Reads in the spike screen's neighbourhood of a read (the read and its six neighbours).
inline constexpr int k_neighbourhood = 7;

// The noise SD reported: the caller's noise_sd if given, else the spike screen's estimate.
double noise_estimate(const Usable& u, double noise_sd);
// The read noise a rate's interval is floored at and its `noise` test is judged on: the
// blanks' (`noise_sd`, their scatter once the plate's shared bend is off) or, on a trace of
// 2·k_neighbourhood reads or more, the well's own robust scatter from the spike screen when
// that is larger — noise that grows with the signal, or that the subtraction adds, is the
// well's own. On shorter traces a curve inflates that scatter, and the blanks' noise stands.
// NaN when the caller gives no noise_sd.
double interval_noise(const Usable& u, double noise_sd);
// A floor for residual SDs when the caller gives no noise_sd: 1e-9 of the signal range, so
// that noise-free (synthetic) traces do not make rounding errors look significant.
double tiny_floor(const Usable& u);

// The chosen window as usable positions [first, last] (spikes inside included).
struct WindowChoice {
  int first = 0, last = 0;
  bool too_few = false, nonlinear = false, depleted = false, lag = false;
  bool rising = false;  // the rate still rises across the chosen window (significant upward bend)
  int disturbed = 0;    // reads set aside as a disturbed start (usable positions 0 … disturbed − 1, spikes counted)
  int undisturbed = 0;  // usable position of the first read after the disturbed start
  double baseline = NAN;  // the trace's signal at reaction start (the conversion limit's zero)
  std::string end;        // what ended it: curvature, conversion, ceiling, overflow, reads, fixed
  // A lag too weak to move the window but that the lag shape fits better than a line
  // (lag_search.hpp): the largest τ it allows and the time its clock starts (0 and NaN when none).
  double possible_lag_tau_s = 0;
  double possible_lag_from_s = NAN;
};
// `limit_signal` is the signal change allowed since `t_ref` (NaN = no conversion limit); the
// product formed is measured from the curve: the candidate's line at its last read minus the
// trace's baseline at `t_ref` (the line of the first `min_points` undisturbed reads there).
// `first`: the first usable position the window may start at (after a disturbed start).
// `noise_sd`: the read noise the blanks give (NaN = not known); on traces too short for the
// spike screen's noise estimate to stay clear of the curvature they look for, the lag tests
// judge against it; else against the larger of `sd_floor` and that estimate.
WindowChoice choose_window(const Usable& u, const RateOptions& opt, double sd_floor, double limit_signal, double t_ref,
                           int first = 0, double noise_sd = NAN);

// The disturbed start of the usable reads (screen_start on the reads the spike screen let
// through, and on the first three reads whatever it said: a disturbed start's first read is
// what it takes for a spike), read noise `sd` — on a short trace also the blanks' smaller
// `noise_sd` for a start that dips below the trace. When there is one,
// the fitted disturbance is taken off every usable read and `skip` is returned as a usable
// position (the first read to keep).
StartScreen screen_usable_start(Usable& u, const RateOptions& opt, double sd, double noise_sd = NAN);

// Least-squares parabola over the window's kept reads and the usable reads after it, up to
// `tangent_reach` times the window's length, except reads the spike screen held out that
// also fail the outlier rule against the parabola; tangent at t_ref.
struct TangentFit {
  double slope = NAN, se = NAN, ci_low = NAN, ci_high = NAN, end_s = NAN;
  bool bends_down = false;  // curvature < 0, one-sided t-test at tangent_alpha
  std::vector<int> pos;     // usable positions the parabola used
  int rejected = 0;         // reads after the line window rejected (spike screen and outlier rule)
};
TangentFit fit_tangent(const Usable& u, const WindowChoice& w, const std::vector<int>& kept, const RateOptions& opt,
                       double sd_floor, double t_ref);

}  // namespace vzero::detail
