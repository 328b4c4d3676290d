#include "vzero/rates.hpp"

#include <algorithm>
#include <fmt/format.h>

namespace vzero {

std::string_view to_string(Estimator e) {
  switch (e) {
    case Estimator::theil_sen: return "theil-sen";
    case Estimator::ols: return "ols";
    case Estimator::huber: return "huber";
  }
  return "theil-sen";
}

bool parse_estimator(std::string_view t, Estimator& out) {
  if (t == "theil-sen") out = Estimator::theil_sen;
  else if (t == "ols") out = Estimator::ols;
  else if (t == "huber") out = Estimator::huber;
  else return false;
  return true;
}

std::string_view to_string(WindowMethod m) {
  switch (m) {
    case WindowMethod::automatic: return "auto";
    case WindowMethod::leading: return "leading";
    case WindowMethod::steepest: return "steepest";
  }
  return "auto";
}

bool parse_window_method(std::string_view t, WindowMethod& out) {
  if (t == "auto") out = WindowMethod::automatic;
  else if (t == "leading") out = WindowMethod::leading;
  else if (t == "steepest") out = WindowMethod::steepest;
  else return false;
  return true;
}

std::string RateOptions::validate() const {
  if (min_points < 3) return fmt::format("min_points is {}; a slope with an uncertainty needs at least 3 reads", min_points);
  if (!(skip_s >= 0)) return fmt::format("skip_s is {}; the dead time must be 0 s or more", skip_s);
  if (!(max_conversion > 0 && max_conversion <= 1))
    return fmt::format("max_conversion is {}; it must be a fraction above 0 and at most 1", max_conversion);
  if (!(min_span_s >= 0)) return fmt::format("min_span_s is {}; it must be 0 s or more", min_span_s);
  if (!std::isnan(signal_ceiling) && !std::isfinite(signal_ceiling))
    return "signal_ceiling must be a finite number";
  return {};
}

// Foundation version: ordinary least squares over the first `min_points` valid reads.
RateResult find_rate(const TraceView& tr, const RateOptions& opt) {
  RateResult r;
  r.estimator = Estimator::ols;
  r.window = WindowMethod::leading;
  r.tangent = "slope";
  r.used.assign(static_cast<std::size_t>(tr.n), 0);
  std::vector<int> idx;
  for (int i = 0; i < tr.n && static_cast<int>(idx.size()) < opt.min_points; ++i) {
    if (tr.status[i] != ReadStatus::ok || tr.time_s[i] < opt.skip_s) continue;
    idx.push_back(i);
  }
  bool any_overflow = false;
  for (int i = 0; i < tr.n; ++i) any_overflow |= tr.status[i] == ReadStatus::overflow;
  if (any_overflow) r.flags.emplace_back("overflow");
  if (static_cast<int>(idx.size()) < opt.min_points) {
    r.flags.emplace_back("too-few-reads");
    return r;
  }
  // Centred two-pass sums (accurate with large time offsets).
  const double n = static_cast<double>(idx.size());
  double mt = 0, my = 0;
  for (int i : idx) { mt += tr.time_s[i]; my += tr.y[i]; }
  mt /= n; my /= n;
  double stt = 0, sty = 0, syy = 0;
  for (int i : idx) {
    double dt = tr.time_s[i] - mt, dy = tr.y[i] - my;
    stt += dt * dt; sty += dt * dy; syy += dy * dy;
  }
  r.slope = sty / stt;
  r.intercept = my - r.slope * mt;
  double rss = 0;
  for (int i : idx) {
    double e = tr.y[i] - (r.intercept + r.slope * tr.time_s[i]);
    rss += e * e;
  }
  r.slope_se = std::sqrt(rss / (n - 2) / stt);
  r.r2 = syy > 0 ? 1 - rss / syy : NAN;
  r.n_points = static_cast<int>(idx.size());
  r.t_start_s = tr.time_s[idx.front()];
  r.t_end_s = tr.time_s[idx.back()];
  for (int i : idx) r.used[static_cast<std::size_t>(i)] = 1;
  if (!std::isnan(tr.substrate) && !std::isnan(tr.conc_per_signal) && tr.substrate > 0) {
    double formed = (tr.y[idx.back()] - tr.y[idx.front()]) * tr.conc_per_signal;
    r.conversion = formed / tr.substrate;
  }
  if (r.slope < 0) r.flags.emplace_back("negative");
  return r;
}

}  // namespace vzero
