// One well panel: the trace on the plate's time axis and on a shared or own vertical
// scale, the accepted window, the fitted line (or a tangent well's parabola and its
// initial tangent), the reads used and left out, and the well's flags.
#include "report/report_panel.hpp"

#include <fmt/format.h>
#include <Eigen/Dense>
#include <algorithm>
#include <cmath>

#include "vzero/table.hpp"

namespace vzero::detail::report {

namespace {

using svg::Document;
using svg::human;

std::vector<std::string> shown_flags(const WellView& w) {
  std::vector<std::string> out;
  for (const auto& f : w.flags)
    if (f != "empty") out.push_back(f);
  return out;
}

// Splits words (", "-joined flags) into lines of at most `width` characters.
std::vector<std::string> wrap(const std::vector<std::string>& words, std::size_t width) {
  std::vector<std::string> lines;
  std::string cur;
  for (std::size_t i = 0; i < words.size(); ++i) {
    std::string word = words[i] + (i + 1 < words.size() ? "," : "");
    if (!cur.empty() && cur.size() + 1 + word.size() > width) {
      lines.push_back(cur);
      cur.clear();
    }
    cur += (cur.empty() ? "" : " ") + word;
  }
  if (!cur.empty()) lines.push_back(cur);
  return lines;
}

bool tangent_well(const WellView& w) { return w.tangent == "parabola"; }

bool has_line(const WellView& w) {
  return std::isfinite(w.t_start_s) && std::isfinite(w.t_end_s) && std::isfinite(w.factor) &&
         std::isfinite(w.intercept) && std::isfinite(w.slope_per_min);
}

// Last used read of a tangent well (the parabola's window ends there), else t_end.
double used_end(const WellView& w) {
  double end = w.t_end_s;
  if (tangent_well(w) && std::isfinite(w.last_used_s)) end = std::max(end, w.last_used_s);
  return end;
}

// Where the tangent touches the parabola: the time its slope equals v0 (drawn units per s).
double touch_time(const WellView& w, const Parabola& q) {
  const double s = w.factor * w.slope_per_min / 60.0;
  if (!q.ok || q.c2 == 0) return w.t_start_s;
  return q.tm + (s - q.c1) / (2 * q.c2);
}

// Tick labels and a bar at the panel's left edge: the panel's own scale.
void own_scale(Document& d, const svg::Scale& sy, const YRange& r, double ax) {
  svg::Ticks t;
  std::vector<double> inside;
  for (int target : {3, 5, 8}) {  // the fewest ticks that put two inside the range
    t = svg::nice_ticks(r.lo, r.hi, target);
    inside.clear();
    for (double v : t.values)
      if (v >= r.lo && v <= r.hi) inside.push_back(v);
    if (inside.size() >= 2) break;
  }
  if (inside.size() < 2) return;
  const double a = inside.front(), b = inside.back();
  d.line(ax + 1, sy(a), ax + 1, sy(b), "scale-bar", {{"data-value", format_number(b - a)}});
  for (double v : {a, b}) {
    d.line(ax + 1, sy(v), ax + 4, sy(v), "tick-mark");
    d.text(ax + 5, sy(v) + (v == b ? 6.5 : -1.5), svg::tick_label(v, t), "ytick");
  }
}

}  // namespace

namespace {

YRange padded(double lo, double hi) {
  if (!std::isfinite(lo)) lo = 0, hi = 1;
  if (hi - lo <= 0) lo -= 0.5, hi += 0.5;
  const double pad = k_pad * (hi - lo);
  return {lo - pad, hi + pad, false};
}

}  // namespace

std::pair<double, double> drawn_extent(const WellView& w) {
  double lo = INFINITY, hi = -INFINITY;
  for (double v : w.y)
    if (std::isfinite(v)) lo = std::min(lo, v), hi = std::max(hi, v);
  if (has_line(w) && !tangent_well(w))
    for (double t : {w.t_start_s, w.t_end_s}) lo = std::min(lo, w.line_at(t)), hi = std::max(hi, w.line_at(t));
  if (!std::isfinite(lo)) return {NAN, NAN};
  return {lo, hi};
}

YRange well_y_range(const WellView& w) {
  const auto [lo, hi] = drawn_extent(w);
  YRange r = padded(lo, hi);
  r.own = true;
  return r;
}

YRange plate_y_range(const PlateView& p) {
  std::vector<double> lows, highs;
  for (const auto& w : p.wells) {
    if (w.role == "standard") continue;
    const auto [lo, hi] = drawn_extent(w);
    if (std::isfinite(lo)) lows.push_back(lo), highs.push_back(hi);
  }
  return shared_y_range(std::move(lows), std::move(highs));
}

YRange shared_y_range(std::vector<double> lows, std::vector<double> highs) {
  if (lows.empty()) return padded(NAN, NAN);
  std::sort(lows.begin(), lows.end());
  std::sort(highs.begin(), highs.end());
  const std::size_t n = lows.size();
  if (n < k_trim_wells) return padded(lows.front(), highs.back());
  // The 5th percentile of the wells' lowest values and the 95th of their highest (nearest
  // rank), widened to take in every well within half that span beyond it: one runaway well
  // does not flatten the rest; it gets its own scale.
  const auto k = static_cast<std::size_t>(std::floor(0.05 * static_cast<double>(n - 1)));
  double lo = lows[k], hi = highs[n - 1 - k];
  const double reach = k_reach * (hi - lo);
  for (double v : lows)
    if (v >= lows[k] - reach) lo = std::min(lo, v);
  for (double v : highs)
    if (v <= highs[n - 1 - k] + reach) hi = std::max(hi, v);
  return padded(lo, hi);
}

YRange panel_range(const WellView& w, const YRange& shared, PanelScale scale) {
  if (scale == PanelScale::plate && w.role != "standard" && fits_in(w, shared)) return shared;
  YRange r = well_y_range(w);
  const double need = shared.hi - shared.lo;
  if (scale == PanelScale::plate && r.hi - r.lo < need) {
    const double mid = (r.lo + r.hi) / 2;
    r.lo = mid - need / 2, r.hi = mid + need / 2;
  }
  return r;
}

bool fits_in(const WellView& w, const YRange& r) {
  const auto [lo, hi] = drawn_extent(w);
  return !std::isfinite(lo) || (lo >= r.lo && hi <= r.hi);
}

double scale_bar_value(double span) {
  if (!(span > 0) || !std::isfinite(span)) return NAN;
  const double half = span / 2;
  const double e = std::pow(10.0, std::floor(std::log10(half)));
  for (double m : {5.0, 2.0, 1.0})
    if (m * e <= half * (1 + 1e-12)) return m * e;
  return e / 2;
}

Parabola fit_parabola(const WellView& w) {
  Parabola q;
  std::vector<double> t, y;
  for (std::size_t i = 0; i < w.time_s.size(); ++i)
    if (w.used[i] && std::isfinite(w.time_s[i]) && std::isfinite(w.y[i])) t.push_back(w.time_s[i]), y.push_back(w.y[i]);
  if (t.size() < 3) return q;
  const auto n = static_cast<Eigen::Index>(t.size());
  for (double v : t) q.tm += v / static_cast<double>(t.size());
  Eigen::MatrixXd a(n, 3);
  Eigen::VectorXd b(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const double c = t[static_cast<std::size_t>(i)] - q.tm;
    a(i, 0) = 1, a(i, 1) = c, a(i, 2) = c * c;
    b(i) = y[static_cast<std::size_t>(i)];
  }
  const Eigen::Vector3d c = a.colPivHouseholderQr().solve(b);
  q.c0 = c(0), q.c1 = c(1), q.c2 = c(2);
  q.ok = std::isfinite(q.c0) && std::isfinite(q.c1) && std::isfinite(q.c2);
  return q;
}

// The fitted line, or a tangent well's parabola (solid) and its initial tangent (dashed).
void draw_fit(Document& d, const WellView& w, const svg::Scale& sx, const svg::Scale& sy) {
  if (!has_line(w)) return;
  if (!tangent_well(w)) {
    d.polyline({{sx(w.t_start_s), sy(w.line_at(w.t_start_s))}, {sx(w.t_end_s), sy(w.line_at(w.t_end_s))}}, "fit-line");
    return;
  }
  const Parabola& q = w.parabola;
  const double end = used_end(w);
  if (!q.ok) return;
  std::vector<svg::Point> curve;
  for (int k = 0; k <= 24; ++k) {
    const double t = w.t_start_s + (end - w.t_start_s) * k / 24.0;
    curve.push_back({sx(t), sy(q.at(t))});
  }
  d.polyline(curve, "fit-curve-well");
  const double t0 = touch_time(w, q), y0 = q.at(t0), s = w.factor * w.slope_per_min / 60.0;
  const double a = std::max(sx.d0, std::min(t0, w.t_start_s)), b = end;
  d.polyline({{sx(a), sy(y0 + s * (a - t0))}, {sx(b), sy(y0 + s * (b - t0))}}, "fit-line tangent",
             {{"data-touch-s", svg::num(t0, 3)}});
}

void draw_reads(Document& d, const WellView& w, const svg::Scale& sx, const svg::Scale& sy, double top) {
  const double end = std::isfinite(w.t_start_s) ? used_end(w) : NAN;
  std::vector<svg::Point> trace, used, outliers, unread;
  for (std::size_t i = 0; i < w.time_s.size(); ++i) {
    const double t = w.time_s[i], v = w.y[i];
    const bool ok = w.read_ok[i] != 0;
    if (!ok) unread.push_back({sx(t), top + 2.5});
    if (!std::isfinite(v) || !std::isfinite(t)) {
      trace.push_back({NAN, NAN});
      continue;
    }
    trace.push_back({sx(t), sy(v)});
    const bool inside = t >= w.t_start_s && t <= end;
    if (w.used[i] && inside)
      used.push_back({sx(t), sy(v)});
    else if (ok && inside)
      outliers.push_back({sx(t), sy(v)});
  }
  d.polyline(trace, "trace");
  d.markers(used, svg::Marker::dot, k_used_dot_radius, "used");
  d.markers(outliers, svg::Marker::cross, 2, "outlier");
  d.markers(unread, svg::Marker::triangle, 2.2, "unread");
}

void draw_panel(Document& d, const PlateView& p, const WellView& w, double x, double y, const YRange& range) {
  const auto flag_lines = wrap(shown_flags(w), 27);
  const double bottom = k_panel_bottom;  // the same in every panel, so a shared scale is the same height
  const double ax = x + 3, aw = k_panel_w - 6, ay = y + k_panel_top, ah = k_panel_h - k_panel_top - bottom;
  const svg::Scale sx{p.t_min_s, p.t_max_s, ax, ax + aw};
  const svg::Scale sy{range.lo, range.hi, ay + ah, ay};
  const std::string cls = "well role-" + w.role + (w.distrusted() ? " flagged" : "") + (range.own ? " own-scale" : "");
  d.open_group(cls, {{"id", w.anchor},
                     {"data-well", w.name},
                     {"data-t0-s", format_number(p.t_min_s)},
                     {"data-t1-s", format_number(p.t_max_s)},
                     {"data-x0", d.n(ax)},
                     {"data-x1", d.n(ax + aw)},
                     {"data-y-lo", format_number(range.lo)},
                     {"data-y-hi", format_number(range.hi)},
                     {"data-y0", d.n(ay + ah)},
                     {"data-y1", d.n(ay)}});
  d.title(tooltip(p, w));
  d.rect(x, y, k_panel_w, k_panel_h, "frame");
  if (std::isfinite(w.t_start_s) && std::isfinite(w.t_end_s)) {
    const double a = sx(w.t_start_s), b = sx(w.t_end_s);
    d.rect(a, ay, b - a, ah, "window", {{"data-t-start-s", w.t_start_text}, {"data-t-end-s", w.t_end_text}});
    if (tangent_well(w) && used_end(w) > w.t_end_s) d.rect(b, ay, sx(used_end(w)) - b, ah, "window-ext");
  }
  if (range.own) own_scale(d, sy, range, ax);
  draw_reads(d, w, sx, sy, ay);
  draw_fit(d, w, sx, sy);
  if (w.time_s.empty()) d.text(x + k_panel_w / 2, ay + ah / 2 + 3, p.has_traces ? "no reads" : "", "wnote", "middle");
  d.text(x + 3, y + 11, w.name, "wname");
  if (w.role != "sample") d.text(x + 6 + 6.6 * static_cast<double>(w.name.size()), y + 11, w.role, "wrole");
  d.text(x + k_panel_w - 3, y + 11, std::isfinite(w.v0) ? human(w.v0, 3) : "no rate", "wv0", "end");
  for (std::size_t k = 0; k < flag_lines.size() && k < 2; ++k) {
    std::string line = flag_lines[k];
    if (k == 1 && flag_lines.size() > 2) line += " \u2026";
    d.text(x + 3, y + k_panel_h - bottom + 8 + 8.5 * static_cast<double>(k), line,
           w.distrusted() ? "wflags" : "wflags quiet");
  }
  d.close_group();
}

}  // namespace vzero::detail::report
