// Thinning a well's reads to what its panel can show, so that the page's size and the
// memory it takes grow with the wells, not with the reads.
//
// The rule. The plate's time axis is cut into columns, k_thin_columns per viewBox unit of
// the plot (half a CSS pixel each). Of each well a read is kept when it is
//   - a read left out as an outlier inside the window (a cross);
//   - of the reads without a value (triangles, all at the plot's top edge), the first and
//     the last of each column: a triangle is 4.4 units wide, a column 0.5, so the
//     triangles' union is the same;
//   - where a break in the trace starts (the first read without a finite value after one
//     with it), a read without a finite time, the well's first and last read, and the
//     first and last used read inside the window (the window's ends);
//   - for the trace line, within each column of each unbroken stretch of the trace: the
//     first, the last, the lowest and the highest read (the M4 rule of Jugel et al., 2014,
//     "M4: a visualization-oriented time series data aggregation", PVLDB 7(10): a line
//     through these four draws the same pixels as the line through every read);
//   - for the used-read dots (1.1 units in radius), within each column: the lowest, the
//     highest, and, going up from the lowest, each dot more than k_thin_dot_step (half a
//     unit) above the last one kept, on the scale the panel is drawn on. Every dropped dot
//     then lies within half a unit across and half a unit up or down of a kept one: the
//     dots' union moves by less than a CSS pixel at its edge.
// The window, the fitted line, the parabola (fitted from every used read before thinning)
// and the v0 come from the rates table, never from the kept reads; the lowest and highest
// value of each well are kept, so every scale stays as it was. A well with fewer reads
// than columns keeps almost everything; the 96-well demo keeps every read.
#include <algorithm>
#include <cmath>

#include "report/report_panel.hpp"

namespace vzero::detail::report {

namespace {

// The end of the shaded window: a tangent well's parabola runs to its last used read.
double window_end(const WellView& w) {
  if (w.tangent == "parabola" && std::isfinite(w.last_used_s)) return std::max(w.t_end_s, w.last_used_s);
  return w.t_end_s;
}

bool finite_read(const WellView& w, std::size_t i) { return std::isfinite(w.time_s[i]) && std::isfinite(w.y[i]); }

// M4 within one column of one unbroken stretch: first, last, lowest and highest.
void keep_m4(const WellView& w, std::size_t a, std::size_t b, std::vector<char>& keep) {
  std::size_t lo = a, hi = a;
  for (std::size_t i = a; i < b; ++i) {
    if (w.y[i] < w.y[lo]) lo = i;
    if (w.y[i] > w.y[hi]) hi = i;
  }
  keep[a] = keep[b - 1] = keep[lo] = keep[hi] = 1;
}

// Used dots of one column: lowest, highest, and one at least every `step` drawn units going up.
void keep_dots(const WellView& w, const svg::Scale& sy, std::vector<std::size_t>& dots, double step,
               std::vector<char>& keep) {
  if (dots.empty()) return;
  std::sort(dots.begin(), dots.end(), [&](std::size_t a, std::size_t b) { return w.y[a] < w.y[b]; });
  double last = sy(w.y[dots.front()]);
  keep[dots.front()] = keep[dots.back()] = 1;
  for (std::size_t i : dots)
    if (std::fabs(sy(w.y[i]) - last) > step) keep[i] = 1, last = sy(w.y[i]);
  dots.clear();
}

}  // namespace

std::vector<std::size_t> kept_reads(const WellView& w, const svg::Scale& sx, const svg::Scale& sy,
                                    double columns_per_unit, double dot_step) {
  const std::size_t n = w.time_s.size();
  std::vector<std::size_t> out;
  if (n == 0) return out;
  std::vector<char> keep(n, 0);
  keep.front() = keep.back() = 1;
  const double end = std::isfinite(w.t_start_s) ? window_end(w) : NAN;
  auto column = [&](std::size_t i) { return std::floor((sx(w.time_s[i]) - sx.r0) * columns_per_unit); };
  auto inside = [&](std::size_t i) { return w.time_s[i] >= w.t_start_s && w.time_s[i] <= end; };
  std::size_t first_used = n, last_used = n, run = 0;  // run: start of the column's stretch
  std::size_t last_unread = n;                          // the last read without a value so far
  std::vector<std::size_t> dots;
  for (std::size_t i = 0; i < n; ++i) {
    const bool fin = finite_read(w, i);
    if (!std::isfinite(w.time_s[i])) keep[i] = 1;
    if (!fin && (i == 0 || finite_read(w, i - 1))) keep[i] = 1;  // where a break starts
    if (!w.read_ok[i] && std::isfinite(w.time_s[i])) {           // triangles: first and last a column
      if (last_unread == n || column(last_unread) != column(i)) {
        keep[i] = 1;
        if (last_unread < n) keep[last_unread] = 1;
      }
      last_unread = i;
    }
    const bool in = fin && inside(i);
    if (in && w.read_ok[i] && !w.used[i]) keep[i] = 1;
    const bool dot = in && w.used[i];
    if (dot) last_used = i, first_used = std::min(first_used, i);
    // Close the stretch's column at a break or where the next column starts.
    if (i > run && (!fin || !finite_read(w, run) || column(i) != column(run))) {
      if (finite_read(w, run)) keep_m4(w, run, i, keep);
      keep_dots(w, sy, dots, dot_step, keep);
      run = i;
    }
    if (!fin) run = i + 1 < n ? i + 1 : i;
    if (dot) dots.push_back(i);
  }
  if (run < n && finite_read(w, run)) keep_m4(w, run, n, keep);
  keep_dots(w, sy, dots, dot_step, keep);
  if (first_used < n) keep[first_used] = keep[last_used] = 1;
  if (last_unread < n) keep[last_unread] = 1;
  for (std::size_t i = 0; i < n; ++i)
    if (keep[i]) out.push_back(i);
  return out;
}

void take_from_all_reads(WellView& w) {
  for (std::size_t i = 0; i < w.time_s.size(); ++i)
    if (w.used[i] && std::isfinite(w.time_s[i]))
      w.last_used_s = std::isnan(w.last_used_s) ? w.time_s[i] : std::max(w.last_used_s, w.time_s[i]);
  if (w.tangent == "parabola") w.parabola = fit_parabola(w);
}

std::size_t thin_well(WellView& w, const svg::Scale& sx, const YRange& shared, PanelScale scale) {
  const YRange r = panel_range(w, shared, scale);
  const auto kept = kept_reads(w, sx, svg::Scale{r.lo, r.hi, k_plot_h, 0}, k_thin_columns, k_thin_dot_step);
  if (kept.size() == w.time_s.size()) return 0;
  auto pick = [&](auto& v) {
    std::remove_reference_t<decltype(v)> out;
    out.reserve(kept.size());
    for (std::size_t i : kept) out.push_back(v[i]);
    v.swap(out);
  };
  const std::size_t dropped = w.time_s.size() - kept.size();
  pick(w.time_s);
  pick(w.y);
  pick(w.read_ok);
  pick(w.used);
  return dropped;
}

std::size_t thin_plate(PlateView& p, PanelScale scale) {
  const svg::Scale sx{p.t_min_s, p.t_max_s, 0, k_panel_w - 6};
  const YRange shared = plate_y_range(p);
  std::size_t dropped = 0;
  for (auto& w : p.wells) dropped += thin_well(w, sx, shared, scale);
  return dropped;
}

}  // namespace vzero::detail::report
