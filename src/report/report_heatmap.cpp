// The rate heat map of a plate: v0 in plate geometry on a sequential colour scale, each
// cell linked to its well's panel.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "report/report_model.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

namespace {

using svg::Document;
using svg::escape;
using svg::human;

// The colour scale of a heat map: the 2nd to 98th percentile of the rates of non-empty
// wells (all of them below 10 wells), from 0 when every rate is positive and the lowest
// is under a quarter of the highest. Rates beyond take the end colours.
struct ColourScale {
  bool any = false;
  double lo = 0, hi = 1;
  bool below = false, above = false;  // some rates lie beyond the ends
  std::vector<double> ticks;          // nice values inside [lo, hi]
  svg::Ticks nice;
  int decimals = 1;  // for the values written in the cells
  double frac(double v) const { return hi > lo ? (v - lo) / (hi - lo) : 0.5; }
};

double quantile(const std::vector<double>& sorted, double q) {
  const double pos = q * static_cast<double>(sorted.size() - 1);
  const auto k = static_cast<std::size_t>(std::floor(pos));
  const std::size_t k1 = std::min(k + 1, sorted.size() - 1);
  return sorted[k] + (pos - static_cast<double>(k)) * (sorted[k1] - sorted[k]);
}

ColourScale colour_scale(const PlateView& p) {
  ColourScale s;
  std::vector<double> v;
  for (const auto& w : p.wells)
    if (w.role != "empty" && std::isfinite(w.v0)) v.push_back(w.v0);
  if (v.empty()) return s;
  s.any = true;
  std::sort(v.begin(), v.end());
  const bool trim = v.size() >= 10;
  s.lo = trim ? quantile(v, 0.02) : v.front();
  s.hi = trim ? quantile(v, 0.98) : v.back();
  if (s.lo >= 0 && s.lo < 0.25 * s.hi) s.lo = 0;
  if (s.hi <= s.lo) {
    const double d = s.lo == 0 ? 1 : std::fabs(s.lo) * 0.1;
    s.lo -= d, s.hi += d;
  }
  s.below = v.front() < s.lo;
  s.above = v.back() > s.hi;
  s.nice = svg::nice_ticks(s.lo, s.hi, 5);
  const double slack = 1e-9 * (s.hi - s.lo);
  for (double t : s.nice.values)
    if (t >= s.lo - slack && t <= s.hi + slack) s.ticks.push_back(t);
  const double reach = std::max(std::fabs(s.lo), std::fabs(s.hi));
  s.decimals = std::clamp(2 - static_cast<int>(std::floor(std::log10(reach))), 0, 4);
  return s;
}

// A cell's value with the scale's decimals and a true minus sign ("−0.0" is "0.0").
std::string cell_text(double v, int decimals) {
  std::string s = fmt::format("{:.{}f}", v, decimals);
  if (s.find_first_not_of("-0.") == std::string::npos) s = fmt::format("{:.{}f}", 0.0, decimals);
  if (!s.empty() && s[0] == '-') s = "\u2212" + s.substr(1);
  return s;
}

// The colour bar at the right of the plate, with its ticks and arrows where rates lie beyond.
void colour_bar(Document& d, const PlateView& p, const ColourScale& scale, double bar_x, double top, double bar_h) {
  const double bar_w = 14;
  const int steps = 64;
  for (int k = 0; k < steps; ++k) {
    const double f0 = static_cast<double>(k) / steps;
    d.rect(bar_x, top + bar_h * (1 - f0 - 1.0 / steps), bar_w, bar_h / steps + 0.3, "bar-step",
           {{"fill", svg::sequential(f0 + 0.5 / steps)}});
  }
  d.rect(bar_x, top, bar_w, bar_h, "bar-frame");
  for (double v : scale.ticks) {
    const double yy = top + bar_h * (1 - scale.frac(v));
    d.line(bar_x + bar_w, yy, bar_x + bar_w + 4, yy, "tick-mark");
    d.text(bar_x + bar_w + 6, yy + 3.5, svg::tick_label(v, scale.nice), "tick", "start");
  }
  // Arrows at an end beyond which some rates lie (they take the end colour).
  if (scale.above) {
    d.raw(fmt::format("<path class=\"bar-beyond\" d=\"M{} {}l{} -7l{} 7z\"/>", d.n(bar_x), d.n(top - 2), d.n(bar_w / 2),
                      d.n(bar_w / 2)));
    d.text(bar_x + bar_w + 6, top - 3, "more: darkest", "tick small");
  }
  if (scale.below) {
    d.raw(fmt::format("<path class=\"bar-beyond\" d=\"M{} {}l{} 7l{} -7z\"/>", d.n(bar_x), d.n(top + bar_h + 2),
                      d.n(bar_w / 2), d.n(bar_w / 2)));
    d.text(bar_x + bar_w + 6, top + bar_h + 9, "less: lightest", "tick small");
  }
  d.text(bar_x + bar_w + 70, top + bar_h / 2, "v0 (" + display_unit(p.v0_unit) + ")", "axis-title", "middle", -90);
}

// The key under the heat map.
void heat_key(Document& d, double left, double ky) {
  double kx = left;
  d.raw(fmt::format("<path class=\"hm-flag\" d=\"M{} {}h-9l9 9z\"/>", d.n(kx + 10), d.n(ky - 8)));
  d.text(kx + 14, ky, "sample well with a flag", "key");
  kx += 150;
  d.rect(kx, ky - 9, 11, 11, "hm-none");
  d.line(kx + 1, ky + 1, kx + 10, ky - 8, "hm-none-mark");
  d.text(kx + 15, ky, "no rate", "key");
  kx += 70;
  d.rect(kx, ky - 9, 11, 11, "hm-empty");
  d.text(kx + 15, ky, "empty in the plate map", "key");
  kx += 150;
  d.rect(kx, ky - 9, 11, 11, "hm-unread");
  d.text(kx + 15, ky, "not read", "key");
}

}  // namespace

std::string heat_map(const PlateView& p) {
  const int rows = p.format.rows, cols = p.format.columns;
  const double cell = std::clamp(760.0 / cols, 12.0, 34.0);
  const double left = 26, top = 16;
  const double plate_w = cols * cell, plate_h = rows * cell;
  const double bar_x = left + plate_w + 22, bar_w = 14;
  const double width = bar_x + bar_w + 92, height = top + std::max(plate_h, 150.0) + 40;
  const double label_size = std::min(10.0, cell * 0.64);
  const ColourScale scale = colour_scale(p);
  Document d(width, height);
  const std::string fs = svg::num(label_size, 1);
  for (int c = 0; c < cols; ++c)
    d.text(left + (c + 0.5) * cell, top - 4, std::to_string(c + 1), "grid-label", "middle", 0, {{"font-size", fs}});
  for (int r = 0; r < rows; ++r)
    d.text(left - 5, top + (r + 0.5) * cell + label_size * 0.35, row_label(r), "grid-label", "end", 0,
           {{"font-size", fs}});
  for (int r = 0; r < rows; ++r) {
    for (int c = 0; c < cols; ++c) {
      const double x = left + c * cell, y = top + r * cell;
      auto it = p.by_index.find(p.format.index({r, c}));
      if (it == p.by_index.end()) {
        d.rect(x + 0.5, y + 0.5, cell - 1, cell - 1, "hm-unread");
        continue;
      }
      const WellView& w = p.wells[it->second];
      d.open_link(w.anchor);
      d.title(tooltip(p, w));
      std::string fill;
      if (w.role == "empty") {
        d.rect(x + 0.5, y + 0.5, cell - 1, cell - 1, "hm-empty", {{"data-well", w.name}});
      } else if (!std::isfinite(w.v0) || !scale.any) {
        d.rect(x + 0.5, y + 0.5, cell - 1, cell - 1, "hm-none", {{"data-well", w.name}});
        d.line(x + 2, y + cell - 2, x + cell - 2, y + 2, "hm-none-mark");
      } else {
        fill = svg::sequential(scale.frac(w.v0));
        d.rect(x + 0.5, y + 0.5, cell - 1, cell - 1, "hm-cell", {{"fill", fill}, {"data-well", w.name}});
        if (cell >= 28)
          d.text(x + cell / 2, y + cell / 2 + 3, cell_text(w.v0, scale.decimals), "hm-value", "middle", 0,
                 {{"fill", svg::ink_on(fill)}});
      }
      if (w.distrusted()) {
        const double s = std::max(4.0, cell * 0.36);
        d.raw(fmt::format("<path class=\"hm-flag\" d=\"M{} {}h-{}l{} {}z\"/>", d.n(x + cell - 0.5), d.n(y + 0.5),
                          d.n(s), d.n(s), d.n(s)));
      }
      d.close_link();
    }
  }
  if (scale.any) colour_bar(d, p, scale, bar_x, top, std::max(plate_h, 150.0));
  heat_key(d, left, top + std::max(plate_h, 150.0) + 16);
  return d.str({{"class", "heatmap"},
                {"width", d.n(width)},
                {"role", "img"},
                {"aria-label", "rate heat map of " + p.source + ", " + p.channel}});
}

}  // namespace vzero::detail::report
