#include "vzero/rates.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cassert>

#include "rates/lag_model.hpp"
#include "rates/rate_window.hpp"
#include "rates/robust.hpp"
#include "vzero/error.hpp"

namespace vzero {

namespace {
constexpr EnumName<Estimator> k_estimators[] = {
    {Estimator::theil_sen, "theil-sen"}, {Estimator::ols, "ols"}, {Estimator::huber, "huber"}};
constexpr EnumName<WindowMethod> k_windows[] = {
    {WindowMethod::automatic, "auto"}, {WindowMethod::leading, "leading"}, {WindowMethod::steepest, "steepest"}};
constexpr EnumName<TangentMode> k_tangents[] = {
    {TangentMode::never, "never"}, {TangentMode::automatic, "auto"}, {TangentMode::always, "always"}};
}  // namespace

template <>
std::span<const EnumName<Estimator>> enum_names<Estimator>() {
  return k_estimators;
}
template <>
std::span<const EnumName<WindowMethod>> enum_names<WindowMethod>() {
  return k_windows;
}
template <>
std::span<const EnumName<TangentMode>> enum_names<TangentMode>() {
  return k_tangents;
}

std::string_view to_string(Estimator e) { return enum_text(e); }
bool parse_estimator(std::string_view t, Estimator& out) { return parse_enum(t, out); }
std::string_view to_string(WindowMethod m) { return enum_text(m); }
bool parse_window_method(std::string_view t, WindowMethod& out) { return parse_enum(t, out); }
std::string_view to_string(TangentMode m) { return enum_text(m); }
bool parse_tangent_mode(std::string_view t, TangentMode& out) { return parse_enum(t, out); }

namespace {

using detail::LineFit;

LineFit fit_line(Estimator e, const double* t, const double* y, int n) {
  switch (e) {
    case Estimator::ols:
      return detail::least_squares_line(t, y, n);
    case Estimator::huber:
      return detail::huber(t, y, n);
    case Estimator::theil_sen:
      break;
  }
  return detail::theil_sen(t, y, n);
}

void add_flag(RateResult& r, const char* word) {
  if (std::find(r.flags.begin(), r.flags.end(), word) == r.flags.end()) r.flags.emplace_back(word);
}

// Reads of the window [first, last] (usable positions) that the outlier rule keeps.
struct Kept {
  std::vector<int> pos;  // usable positions kept
  int outliers = 0;
  LineFit line;               // the rule's Theil–Sen line
  bool line_on_kept = false;  // that line was fitted to exactly the kept reads
};

// Outlier rule: residuals from the Theil–Sen line of the window's reads that passed the spike
// screen; a read is out when |r| > k·max(1.4826·MAD of those reads' residuals, noise floor).
// Never leaves fewer than 3 reads.
// `kept` is filled anew (its storage reused).
void apply_outlier_rule(const detail::Usable& u, int first, int last, double k, double sd_floor, bool with_interval,
                        Kept& kept) {
  kept.pos.clear();
  kept.outliers = 0;
  kept.line = LineFit{};
  kept.line_on_kept = false;
  thread_local std::vector<double> ct, cy, a;  // scratch reused by each thread
  thread_local std::vector<int> cpos;
  ct.clear();
  cy.clear();
  cpos.clear();
  a.clear();
  const auto width = static_cast<std::size_t>(last - first + 1);
  kept.pos.reserve(width);
  for (int i = first; i <= last; ++i)
    if (!u.spike[static_cast<std::size_t>(i)]) {
      ct.push_back(u.t[static_cast<std::size_t>(i)]);
      cy.push_back(u.y[static_cast<std::size_t>(i)]);
      cpos.push_back(i);
    }
  if (ct.size() < 3) {
    ct.assign(u.t.begin() + first, u.t.begin() + last + 1);
    cy.assign(u.y.begin() + first, u.y.begin() + last + 1);
    cpos.clear();
    for (int i = first; i <= last; ++i) cpos.push_back(i);
  }
  const LineFit ts = detail::theil_sen(ct.data(), cy.data(), static_cast<int>(ct.size()), nullptr, with_interval);
  kept.line = ts;
  for (std::size_t i = 0; i < ct.size(); ++i) a.push_back(std::fabs(cy[i] - (ts.intercept + ts.slope * ct[i])));
  const double scale = std::max(1.4826 * detail::median_inplace(a), sd_floor);
  for (int i = first; i <= last; ++i) {
    const double r = u.y[static_cast<std::size_t>(i)] - (ts.intercept + ts.slope * u.t[static_cast<std::size_t>(i)]);
    if (std::isfinite(ts.slope) && std::fabs(r) > k * scale)
      ++kept.outliers;
    else
      kept.pos.push_back(i);
  }
  if (kept.pos.size() < 3) {
    kept.pos.clear();
    for (int i = first; i <= last; ++i) kept.pos.push_back(i);
    kept.outliers = 0;
  }
  kept.line_on_kept = with_interval && kept.pos == cpos;
}

// Widens r's 95 % interval to what the data support: each side at least 1.96 × the read
// noise / √Σ(t − t̄)² of the straight line over the reads `t`, then the blanks' rate spread
// added in quadrature: t × rate_sd, t Student's 97.5 % quantile on the degrees of freedom
// rate_sd was estimated on (an SD from the 8 blank pairs of a 96-well plate is itself
// uncertain: with the normal quantile a well whose interval is mostly drift would hold the
// truth 91 % of the time, not 95 %: common practice). The interval's asymmetry is kept.
void widen_interval(RateResult& r, const TraceView& tr, const std::vector<double>& t, int n) {
  if (!std::isfinite(r.ci_low) || !std::isfinite(r.ci_high)) return;
  constexpr double z = 1.959963984540054;  // standard normal 97.5 % quantile
  double floor = 0;
  if (std::isfinite(tr.noise_sd) && n >= 2) {
    double mt = 0, stt = 0;
    for (double x : t) mt += x;
    mt /= n;
    for (double x : t) stt += (x - mt) * (x - mt);
    if (stt > 0) floor = z * tr.noise_sd / std::sqrt(stt);
  }
  const double q = tr.rate_sd_dof > 0 ? detail::student_t_quantile(0.975, tr.rate_sd_dof) : z;
  const double drift = std::isfinite(tr.rate_sd) ? q * tr.rate_sd : 0.0;
  const double below = std::hypot(std::max(r.slope - r.ci_low, floor), drift);
  const double above = std::hypot(std::max(r.ci_high - r.slope, floor), drift);
  if (below > r.slope - r.ci_low) r.ci_low = r.slope - below;
  if (above > r.ci_high - r.slope) r.ci_high = r.slope + above;
}

}  // namespace

namespace {

// The reads a window may use. When every read is above the ceiling (or at the detector's
// plateau), a rate from them all is better than none, and the `ceiling` or `saturated` flag
// says it is not to be trusted. False (flag too-few-reads) when fewer than two are left.
bool take_usable(const TraceView& tr, const RateOptions& opt, RateResult& r, detail::Usable& u, bool& saturated) {
  const double clip = detail::detector_plateau(tr, opt);
  detail::usable_reads_into(tr, opt, clip, u);
  saturated = false;
  if (u.t.size() < 2 && (u.any_ceiling || u.any_saturated)) {
    const bool ceiling = u.any_ceiling;
    saturated = u.any_saturated;
    RateOptions no_ceiling = opt;
    no_ceiling.signal_ceiling = NAN;
    detail::usable_reads_into(tr, no_ceiling, NAN, u);
    u.any_ceiling = ceiling;
  }
  if (u.any_overflow) add_flag(r, "overflow");
  if (u.any_ceiling) add_flag(r, "ceiling");
  if (saturated) add_flag(r, "saturated");
  if (u.t.size() >= 2) return true;
  add_flag(r, "too-few-reads");
  r.window_end = u.truncated_by.empty() ? "reads" : u.truncated_by;
  return false;
}

// What the window search decided, as flags and fields of the result.
void record_window(const detail::WindowChoice& w, const detail::StartScreen& start, const detail::Usable& u,
                   RateResult& r) {
  if (w.too_few) add_flag(r, "too-few-reads");
  if (w.nonlinear) add_flag(r, "nonlinear");
  if (w.depleted) add_flag(r, "depleted");
  if (w.disturbed > 0) add_flag(r, "disturbed");
  if (w.lag) add_flag(r, "lag");
  if (w.rising) add_flag(r, "rising");
  r.window_end = w.end;
  r.disturbed_reads = w.disturbed;
  r.disturbed_offset = start.offset;
  r.lag_s = w.lag ? u.t[static_cast<std::size_t>(w.first)] - u.t[static_cast<std::size_t>(w.undisturbed)] : 0.0;
}

// Outlier rule on every usable read of the window, then the estimator on the rest: the
// line, the reads used, and their times (`kt`).
LineFit fit_window(const detail::Usable& u, const detail::WindowChoice& w, const RateOptions& opt, double sd_floor,
                   RateResult& r, Kept& kept, std::vector<double>& kt) {
  const bool theil_sen = opt.estimator == Estimator::theil_sen;
  apply_outlier_rule(u, w.first, w.last, opt.outlier_k, sd_floor, theil_sen, kept);
  thread_local std::vector<double> ky;  // scratch reused by each thread
  ky.clear();
  kt.reserve(kept.pos.size());
  for (int p : kept.pos) {
    kt.push_back(u.t[static_cast<std::size_t>(p)]);
    ky.push_back(u.y[static_cast<std::size_t>(p)]);
    r.used[static_cast<std::size_t>(u.idx[static_cast<std::size_t>(p)])] = 1;
  }
  // The rule's line is the Theil–Sen estimate when it was fitted to exactly these reads.
  const LineFit line = theil_sen && kept.line_on_kept
                           ? kept.line
                           : fit_line(opt.estimator, kt.data(), ky.data(), static_cast<int>(kt.size()));
  r.n_points = w.last - w.first + 1;
  r.n_outliers = kept.outliers;
  if (kept.outliers > 0) add_flag(r, "outliers");
  r.t_start_s = u.t[static_cast<std::size_t>(w.first)];
  r.t_end_s = u.t[static_cast<std::size_t>(w.last)];
  r.line_slope = r.slope = line.slope;
  r.line_slope_se = r.slope_se = line.slope_se;
  r.ci_low = line.ci_low;
  r.ci_high = line.ci_high;
  r.intercept = line.intercept;
  r.r2 = line.r2;
  return line;
}

// Converted at the window's end: the product formed since reaction start, from the curve
// (the fixed windows take the baseline from their own line's first reads). Returns the
// fraction converted at the window's middle. A window after a lag rates the reaction at the
// substrate the lag left: when more than half the conversion limit is used at its middle
// (where a window from the start that ends at the limit has its middle at most), its line
// underestimates v0 at the starting substrate by more than the limit allows anywhere else
// (`lag_depleted`; the flag waits for the tangent, which corrects for the substrate used).
double conversion(const detail::Usable& u, const detail::WindowChoice& w, const LineFit& line, const TraceView& tr,
                  const RateOptions& opt, double t_ref, RateResult& r, bool& lag_depleted) {
  double baseline = w.baseline;
  if (!std::isfinite(baseline)) {
    thread_local std::vector<double> bt, by;  // scratch reused by each thread
    bt.clear();
    by.clear();
    for (std::size_t i = 0; i < u.t.size() && static_cast<int>(bt.size()) < opt.min_points; ++i)
      if (!u.spike[i]) {
        bt.push_back(u.t[i]);
        by.push_back(u.y[i]);
      }
    const LineFit b = detail::least_squares_line(bt.data(), by.data(), static_cast<int>(bt.size()));
    baseline = b.intercept + b.slope * t_ref;
  }
  r.conversion = (line.intercept + line.slope * r.t_end_s - baseline) * tr.conc_per_signal / tr.substrate;
  const double at_start = (line.intercept + line.slope * r.t_start_s - baseline) * tr.conc_per_signal / tr.substrate;
  const double mid = 0.5 * (at_start + r.conversion);
  lag_depleted = r.lag_s > 0 && mid > 0.5 * opt.max_conversion;
  return mid;
}

// Initial tangent of a parabola, for curving wells: taken when it bends down significantly,
// rests on enough reads, and lies above the line by no more than depletion allows (with a
// fraction f converted by the window's end, v0/line ≤ 1/(1 − f)).
void take_tangent(const detail::Usable& u, const detail::WindowChoice& w, const Kept& kept, const LineFit& line,
                  const RateOptions& opt, double sd_floor, double t_ref, RateResult& r) {
  const detail::TangentFit tf = detail::fit_tangent(u, w, kept.pos, opt, sd_floor, t_ref);
  r.tangent_slope = tf.slope;
  r.tangent_se = tf.se;
  r.tangent_end_s = tf.end_s;
  const double f = std::isfinite(r.conversion) ? std::clamp(r.conversion, 0.0, 0.5) : opt.max_conversion;
  const bool plausible = tf.slope > line.slope && tf.slope <= line.slope / (1 - f);
  const bool enough = static_cast<int>(tf.pos.size()) >= std::max(5, opt.tangent_min_reads);
  const bool use = opt.tangent == TangentMode::always ? std::isfinite(tf.slope) : tf.bends_down && plausible && enough;
  if (!use) return;
  // v0 now rests on the parabola's reads: they are the ones used, and reads it held out are
  // outliers too.
  r.tangent = "parabola";
  for (int p : tf.pos) r.used[static_cast<std::size_t>(u.idx[static_cast<std::size_t>(p)])] = 1;
  r.n_outliers += tf.rejected;
  if (tf.rejected > 0) add_flag(r, "outliers");
  r.slope = tf.slope;
  r.slope_se = tf.se;
  r.ci_low = tf.ci_low;
  r.ci_high = tf.ci_high;
}

// Distinguishable from noise, of which sign, precise enough? The interval stated is the one
// the data support: each side at least what the read noise alone gives the straight line
// over the reads used, and the spread of the blanks' own rates (which the subtraction
// carries into every sample) added in quadrature; its wider side relative to the rate
// decides `imprecise` (the sides differ where a bias widens the upper one: a well whose v0
// may lie 25 % above its rate is not known to ±15 %, whatever its lower side). A trace stuck
// at the detector's maximum says nothing about the rate's size or sign: it is `saturated`,
// never noise or negative.
void judge(const TraceView& tr, const RateOptions& opt, const std::vector<double>& kt, bool saturated, double bias_up,
           RateResult& r) {
  const int nk = static_cast<int>(kt.size());
  bool noise_only = !(r.ci_low > 0 || r.ci_high < 0);
  if (std::isfinite(tr.noise_sd) && opt.lod_factor > 0) {
    double mt = 0, stt = 0;
    for (double t : kt) mt += t;
    mt /= nk;
    for (double t : kt) stt += (t - mt) * (t - mt);
    const double drift = std::isfinite(tr.rate_sd) ? tr.rate_sd : 0.0;
    if (stt > 0 && std::fabs(r.slope) < opt.lod_factor * std::hypot(tr.noise_sd / std::sqrt(stt), drift))
      noise_only = true;
  }
  if (saturated) noise_only = false;
  if (noise_only) add_flag(r, "noise");
  if (r.slope < 0 && !saturated) add_flag(r, "negative");
  if (!saturated) widen_interval(r, tr, kt, nk);
  if (bias_up > 0 && std::isfinite(r.ci_high)) r.ci_high = r.slope + std::hypot(r.ci_high - r.slope, r.slope * bias_up);
  if (!noise_only && !saturated && opt.precision_limit > 0) {
    const double half = std::max(r.ci_high - r.slope, r.slope - r.ci_low);
    if (!(half <= opt.precision_limit * std::fabs(r.slope))) add_flag(r, "imprecise");
  }
}

}  // namespace

RateResult find_rate(const TraceView& tr, const RateOptions& opt) {
  assert(opt.min_points >= 3 && opt.max_conversion > 0 && opt.outlier_k > 0 && opt.tangent_reach >= 1);
  RateResult r;
  r.estimator = opt.estimator;
  r.window = opt.window;
  r.tangent = "slope";
  r.lag_s = 0;
  r.used.assign(static_cast<std::size_t>(std::max(tr.n, 0)), 0);
  const double t_ref = std::isnan(opt.time_zero_s) ? (tr.n > 0 ? tr.time_s[0] : 0.0) : opt.time_zero_s;
  // Per-thread working storage (find_rate runs once per well): the usable reads, the reads
  // the outlier rule keeps and their times, each filled anew below.
  thread_local detail::Usable u;
  thread_local Kept kept;
  thread_local std::vector<double> kt;
  kt.clear();
  bool saturated = false;
  if (!take_usable(tr, opt, r, u, saturated)) return r;
  r.noise_sd = detail::noise_estimate(u, tr.noise_sd);
  const double sd_floor = std::isfinite(tr.noise_sd) ? tr.noise_sd : detail::tiny_floor(u);
  const double limit_per_signal = (std::isfinite(tr.substrate) && tr.substrate > 0 && std::isfinite(tr.conc_per_signal))
                                      ? opt.max_conversion * tr.substrate / tr.conc_per_signal
                                      : NAN;  // signal change allowed since time zero

  // A disturbed start is set aside, and what is left of it taken off the reads kept.
  detail::StartScreen start;
  if (opt.detect_disturbed && opt.window == WindowMethod::automatic)
    start = detail::screen_usable_start(u, opt, std::max(sd_floor, std::isfinite(u.local_sd) ? u.local_sd : 0.0),
                                        tr.noise_sd);
  const detail::WindowChoice w =
      detail::choose_window(u, opt, sd_floor, limit_per_signal, t_ref, start.skip, tr.noise_sd);
  record_window(w, start, u, r);
  const LineFit line = fit_window(u, w, opt, sd_floor, r, kept, kt);
  bool lag_depleted = false;
  const double mid_conversion =
      std::isfinite(limit_per_signal) ? conversion(u, w, line, tr, opt, t_ref, r, lag_depleted) : NAN;
  // The interval's read noise: the blanks', or the well's own where it is larger.
  TraceView judged = tr;
  judged.noise_sd = detail::interval_noise(u, tr.noise_sd);
  if (opt.tangent != TangentMode::never && opt.window != WindowMethod::steepest)
    take_tangent(u, w, kept, line, opt, std::isfinite(judged.noise_sd) ? judged.noise_sd : sd_floor, t_ref, r);
  // The initial tangent is the parabola's slope at reaction start: it answers for the
  // substrate the lag used, the straight line does not.
  if (lag_depleted && r.tangent != "parabola") add_flag(r, "depleted");
  // Biases a straight line may carry, relative to its rate, that the interval's upper side
  // allows for (added in judge, after the noise floor, in quadrature):
  // - substrate used: the line rates the reaction at the substrate left at its window's
  //   middle; with a fraction c converted there, v0 can lie up to line/(1 − c) − line above it
  //   (the Michaelis–Menten rate falls no faster than the substrate, v/v0 ≥ 1 − c; the bound
  //   is reached far below Km);
  // - a lag the reads hint at but do not show clearly (lag_search.cpp): were it real, with the
  //   largest τ they allow, the window would sit in its ramp and the line would measure
  //   v·(the slope of the lag clock over the reads used) instead of v; the note says so.
  double bias_up = 0;
  if (r.tangent == "slope" && r.slope > 0 && std::isfinite(mid_conversion) && mid_conversion > 0) {
    const double c = std::min(mid_conversion, 0.5);
    bias_up = c / (1 - c);
  }
  if (r.tangent == "slope" && r.slope > 0 && w.possible_lag_tau_s > 0 && !kt.empty()) {
    const double ratio =
        detail::lag_clock_slope(kt.data(), static_cast<int>(kt.size()), w.possible_lag_from_s, w.possible_lag_tau_s);
    if (ratio > 0 && ratio < 1) {
      bias_up = std::hypot(bias_up, 1 / ratio - 1);
      add_flag(r, "lag-possible");
    }
  }
  if (std::isfinite(r.slope)) judge(judged, opt, kt, saturated, bias_up, r);
  return r;
}

}  // namespace vzero
