// The plate sections of the report: the rate heat map and the well panels.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "report/report_model.hpp"
#include "vzero/svg.hpp"
#include "vzero/table.hpp"

namespace vzero::detail::report {

namespace {

using svg::Attrs;
using svg::Document;
using svg::escape;
using svg::human;

// Panel geometry, in viewBox units (about CSS pixels on screen).
constexpr double k_panel_w = 104, k_panel_h = 82, k_gap = 4;
constexpr double k_left = 24, k_top = 16;  // row-label column and column-label row

// A rectangle of plate positions: rows [row0, row0 + rows) × columns [col0, col0 + cols).
struct Block {
  int row0 = 0, rows = 0, col0 = 0, cols = 0;
};

std::string join(const std::vector<std::string>& v, const char* sep) {
  std::string out;
  for (const auto& s : v) out += (out.empty() ? "" : sep) + s;
  return out;
}

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

std::string tooltip(const PlateView& p, const WellView& w) {
  std::string t = w.name + " \u00b7 " + w.role;
  for (const auto& [k, v] : w.map_values) t += "\n" + k + ": " + v;
  if (std::isfinite(w.v0)) {
    t += "\nv0 = " + human(w.v0) + " " + display_unit(p.v0_unit);
    if (std::isfinite(w.v0_se)) t += " (SE " + human(w.v0_se, 2) + ")";
  } else {
    t += "\nno rate";
  }
  if (std::isfinite(w.t_start_s))
    t += fmt::format("\nwindow {}\u2013{} s, {} reads, {} left out", human(w.t_start_s), human(w.t_end_s), w.n_points,
                     w.n_outliers);
  if (w.tangent == "parabola") t += "\nv0 is the initial tangent of a parabola";
  if (std::isfinite(w.conversion_pct)) t += "\nconverted by the window's end: " + human(w.conversion_pct, 3) + " %";
  auto f = shown_flags(w);
  t += "\nflags: " + (f.empty() ? std::string("none") : join(f, ", "));
  t += fmt::format("\nrates table line {}", w.line);
  return t;
}

void draw_panel(Document& d, const PlateView& p, const WellView& w, double x, double y) {
  const auto flags = shown_flags(w);
  const auto flag_lines = wrap(flags, 27);
  const double bottom =
      flag_lines.empty() ? 4 : 3 + 8.5 * static_cast<double>(std::min<std::size_t>(flag_lines.size(), 2));
  const double ax = x + 3, aw = k_panel_w - 6, ay = y + 15, ah = k_panel_h - 15 - bottom;
  const svg::Scale sx{p.t_min_s, p.t_max_s, ax, ax + aw};
  std::string cls = "well role-" + w.role + (w.flagged() && w.role != "empty" ? " flagged" : "");
  d.open_group(cls, {{"id", w.anchor},
                     {"data-well", w.name},
                     {"data-t0-s", format_number(p.t_min_s)},
                     {"data-t1-s", format_number(p.t_max_s)},
                     {"data-x0", d.n(ax)},
                     {"data-x1", d.n(ax + aw)}});
  d.title(tooltip(p, w));
  d.rect(x, y, k_panel_w, k_panel_h, "frame");

  // Vertical range: the trace and the fitted line's ends.
  double lo = INFINITY, hi = -INFINITY;
  for (double v : w.y)
    if (std::isfinite(v)) lo = std::min(lo, v), hi = std::max(hi, v);
  const bool has_line = std::isfinite(w.t_start_s) && std::isfinite(w.t_end_s) && std::isfinite(w.factor) &&
                        std::isfinite(w.intercept) && std::isfinite(w.slope_per_min);
  if (has_line)
    for (double t : {w.t_start_s, w.t_end_s}) lo = std::min(lo, w.line_at(t)), hi = std::max(hi, w.line_at(t));
  if (!std::isfinite(lo)) lo = 0, hi = 1;
  if (hi - lo <= 0) lo -= 0.5, hi += 0.5;
  const double pad = 0.08 * (hi - lo);
  const svg::Scale sy{lo - pad, hi + pad, ay + ah, ay};

  if (std::isfinite(w.t_start_s) && std::isfinite(w.t_end_s)) {
    double a = sx(w.t_start_s), b = sx(w.t_end_s);
    d.rect(a, ay, b - a, ah, "window", {{"data-t-start-s", w.t_start_text}, {"data-t-end-s", w.t_end_text}});
  }
  std::vector<svg::Point> trace, used, outliers, unread;
  for (std::size_t i = 0; i < w.time_s.size(); ++i) {
    const double t = w.time_s[i], v = w.y[i];
    const bool ok = w.status[i] == "ok";
    if (!ok) unread.push_back({sx(t), ay + 2.5});
    if (!std::isfinite(v) || !std::isfinite(t)) {
      trace.push_back({NAN, NAN});
      continue;
    }
    trace.push_back({sx(t), sy(v)});
    if (w.used[i])
      used.push_back({sx(t), sy(v)});
    else if (ok && t >= w.t_start_s && t <= w.t_end_s)
      outliers.push_back({sx(t), sy(v)});
  }
  d.polyline(trace, "trace");
  d.markers(used, svg::Marker::dot, 1.1, "used");
  if (has_line)
    d.polyline({{sx(w.t_start_s), sy(w.line_at(w.t_start_s))}, {sx(w.t_end_s), sy(w.line_at(w.t_end_s))}},
               w.tangent == "parabola" ? "fit-line tangent" : "fit-line");
  d.markers(outliers, svg::Marker::cross, 2, "outlier");
  d.markers(unread, svg::Marker::triangle, 2.2, "unread");
  if (w.time_s.empty()) d.text(x + k_panel_w / 2, ay + ah / 2 + 3, p.has_traces ? "no reads" : "", "wnote", "middle");

  d.text(x + 3, y + 11, w.name, "wname");
  if (w.role != "sample") d.text(x + 6 + 6.6 * static_cast<double>(w.name.size()), y + 11, w.role, "wrole");
  d.text(x + k_panel_w - 3, y + 11, std::isfinite(w.v0) ? human(w.v0, 3) : "no rate", "wv0", "end");
  for (std::size_t k = 0; k < flag_lines.size() && k < 2; ++k) {
    std::string line = flag_lines[k];
    if (k == 1 && flag_lines.size() > 2) line += " \u2026";
    d.text(x + 3, y + k_panel_h - bottom + 8 + 8.5 * static_cast<double>(k), line, "wflags");
  }
  d.close_group();
}

// The panels of one block of the plate, with row and column labels and a time axis.
std::string panel_grid(const PlateView& p, Block b) {
  const double width = k_left + b.cols * (k_panel_w + k_gap) + 4;
  const double grid_h = b.rows * (k_panel_h + k_gap);
  const double height = k_top + grid_h + 34;
  Document d(width, height);
  for (int c = 0; c < b.cols; ++c)
    d.text(k_left + c * (k_panel_w + k_gap) + k_panel_w / 2, 11, std::to_string(b.col0 + c + 1), "grid-label",
           "middle");
  for (int r = 0; r < b.rows; ++r) {
    const double y = k_top + r * (k_panel_h + k_gap);
    d.text(k_left - 7, y + k_panel_h / 2 + 4, row_label(b.row0 + r), "grid-label", "end");
    for (int c = 0; c < b.cols; ++c) {
      const double x = k_left + c * (k_panel_w + k_gap);
      WellId id{b.row0 + r, b.col0 + c};
      auto it = p.by_index.find(p.format.index(id));
      if (it == p.by_index.end()) {
        d.rect(x, y, k_panel_w, k_panel_h, "unread-well");
        d.text(x + k_panel_w / 2, y + k_panel_h / 2 + 3, well_name(id) + " not read", "wnote", "middle");
        continue;
      }
      draw_panel(d, p, p.wells[it->second], x, y);
    }
  }
  // Time axis under the last row: the same for every panel.
  svg::Ticks ticks = svg::nice_ticks(p.t_min_s, p.t_max_s, 3);
  const double y0 = k_top + grid_h;
  for (int c = 0; c < b.cols; ++c) {
    const double ax = k_left + c * (k_panel_w + k_gap) + 3;
    const svg::Scale sx{p.t_min_s, p.t_max_s, ax, ax + k_panel_w - 6};
    for (double v : ticks.values) {
      if (v < p.t_min_s - 1e-9 || v > p.t_max_s + 1e-9) continue;
      d.line(sx(v), y0 - k_gap, sx(v), y0, "tick-mark");
      d.text(sx(v), y0 + 9, svg::tick_label(v, ticks), "tick small", "middle");
    }
  }
  d.text(k_left + b.cols * (k_panel_w + k_gap) / 2, y0 + 26, "time (s), the same axis in every panel", "axis-title",
         "middle");
  return d.str({{"class", "panels"},
                {"width", d.n(width)},
                {"role", "img"},
                {"aria-label", fmt::format("well panels, rows {}\u2013{}, columns {}\u2013{}", row_label(b.row0),
                                           row_label(b.row0 + b.rows - 1), b.col0 + 1, b.col0 + b.cols)}});
}

// The key to the panels' marks.
std::string panel_key() {
  Document d(1000, 24);
  double x = 4;
  auto label = [&](const std::string& text) {
    d.text(x, 15, text, "key");
    x += 5.6 * static_cast<double>(text.size()) + 22;
  };
  d.rect(x, 4, 18, 14, "window");
  x += 24;
  label("accepted window");
  d.line(x, 11, x + 18, 11, "fit-line");
  x += 24;
  label("fitted line");
  d.line(x, 11, x + 18, 11, "fit-line tangent");
  x += 24;
  label("initial tangent (curved window)");
  d.markers({{x + 4, 11}}, svg::Marker::dot, 1.6, "used");
  x += 12;
  label("read used");
  d.markers({{x + 4, 11}}, svg::Marker::cross, 3, "outlier");
  x += 14;
  label("read left out as outlier");
  d.markers({{x + 4, 11}}, svg::Marker::triangle, 3.2, "unread");
  x += 14;
  label("no value (overflow, missing)");
  return d.str({{"class", "key"}, {"width", "1000"}, {"role", "img"}, {"aria-label", "key to the well panels"}});
}

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
      if (w.flagged() && w.role != "empty") {
        const double s = std::max(4.0, cell * 0.36);
        d.raw(fmt::format("<path class=\"hm-flag\" d=\"M{} {}h-{}l{} {}z\"/>", d.n(x + cell - 0.5), d.n(y + 0.5),
                          d.n(s), d.n(s), d.n(s)));
      }
      d.close_link();
    }
  }
  // Colour bar.
  if (scale.any) {
    const double bar_h = std::max(plate_h, 150.0);
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
      d.raw(fmt::format("<path class=\"bar-beyond\" d=\"M{} {}l{} -7l{} 7z\"/>", d.n(bar_x), d.n(top - 2),
                        d.n(bar_w / 2), d.n(bar_w / 2)));
      d.text(bar_x + bar_w + 6, top - 3, "more: darkest", "tick small");
    }
    if (scale.below) {
      d.raw(fmt::format("<path class=\"bar-beyond\" d=\"M{} {}l{} 7l{} -7z\"/>", d.n(bar_x), d.n(top + bar_h + 2),
                        d.n(bar_w / 2), d.n(bar_w / 2)));
      d.text(bar_x + bar_w + 6, top + bar_h + 9, "less: lightest", "tick small");
    }
    d.text(bar_x + bar_w + 70, top + bar_h / 2, "v0 (" + display_unit(p.v0_unit) + ")", "axis-title", "middle", -90);
  }
  // Key.
  const double ky = top + std::max(plate_h, 150.0) + 16;
  double kx = left;
  d.raw(fmt::format("<path class=\"hm-flag\" d=\"M{} {}h-9l9 9z\"/>", d.n(kx + 10), d.n(ky - 8)));
  d.text(kx + 14, ky, "flagged", "key");
  kx += 70;
  d.rect(kx, ky - 9, 11, 11, "hm-none");
  d.line(kx + 1, ky + 1, kx + 10, ky - 8, "hm-none-mark");
  d.text(kx + 15, ky, "no rate", "key");
  kx += 70;
  d.rect(kx, ky - 9, 11, 11, "hm-empty");
  d.text(kx + 15, ky, "empty in the plate map", "key");
  kx += 150;
  d.rect(kx, ky - 9, 11, 11, "hm-unread");
  d.text(kx + 15, ky, "not read", "key");
  return d.str({{"class", "heatmap"},
                {"width", d.n(width)},
                {"role", "img"},
                {"aria-label", "rate heat map of " + p.source + ", " + p.channel}});
}

std::string block_title(Block b) {
  return fmt::format("Rows {}\u2013{}, columns {}\u2013{}", row_label(b.row0), row_label(b.row0 + b.rows - 1),
                     b.col0 + 1, b.col0 + b.cols);
}

std::string block_id(const PlateView& p, Block b) { return p.id + "-block-" + well_name({b.row0, b.col0}); }

}  // namespace

std::string render_plate(const PlateView& p, const ReportOptions& o) {
  int flagged = 0, with_rate = 0;
  for (const auto& w : p.wells) {
    flagged += w.flagged();
    with_rate += std::isfinite(w.v0) && w.role != "empty";
  }
  std::string h = fmt::format("<section class=\"plate\" id=\"{}\">\n<h2>Plate {} \u00b7 channel {}</h2>\n", p.id,
                              escape(p.source), escape(p.channel));
  h += fmt::format(
      "<p class=\"lede\">{} wells read on a {}-well plate ({} rows \u00d7 {} columns); {} with a rate, {} flagged. "
      "v0 in {}; traces show {}.</p>\n",
      p.wells.size(), p.format.wells(), p.format.rows, p.format.columns, with_rate, flagged,
      escape(display_unit(p.v0_unit)),
      p.converted ? "the concentration formed in the reaction direction (" + escape(display_unit(p.y_unit)) + ")"
                  : "the blank-corrected signal in the reaction direction (" + escape(display_unit(p.y_unit)) + ")");
  h += "<figure class=\"heat\">" + heat_map(p) +
       "<figcaption>Rate heat map in plate geometry (rows A\u2026, columns 1\u2026). Colour: v0 on the scale at "
       "the right, light = slow, dark = fast; the scale spans the 2nd to 98th percentile of the rates, and rates "
       "beyond it take the end colour. A triangle marks a flagged well. Each well links to its panel.</figcaption>"
       "</figure>\n";
  const bool blocks = p.format.wells() > o.panel_wells;
  std::vector<Block> list;
  if (!blocks) {
    list.push_back({0, p.format.rows, 0, p.format.columns});
  } else {
    for (int r = 0; r < p.format.rows; r += o.block_rows)
      for (int c = 0; c < p.format.columns; c += o.block_columns)
        list.push_back(
            {r, std::min(o.block_rows, p.format.rows - r), c, std::min(o.block_columns, p.format.columns - c)});
  }
  h += "<section class=\"wells\">\n<h3>Well traces</h3>\n";
  if (!p.has_traces)
    h += "<p class=\"note\">No traces table was given: panels show the window but no curve (pass --traces).</p>\n";
  h += fmt::format(
      "<p class=\"note\">One panel per well: {} against time. Each panel's vertical axis spans its own well's range; "
      "the "
      "number at the top right is v0 ({}); flags are written at the bottom.</p>\n",
      p.converted ? "concentration" : "signal change", escape(display_unit(p.v0_unit)));
  h += "<div class=\"key-row\">" + panel_key() + "</div>\n";
  if (blocks) {
    h += "<nav class=\"blocks\"><span>Blocks:</span>";
    for (const auto& b : list)
      h += fmt::format(" <a href=\"#{}\">{}{}\u2013{}{}</a>", block_id(p, b), row_label(b.row0), b.col0 + 1,
                       row_label(b.row0 + b.rows - 1), b.col0 + b.cols);
    h += "</nav>\n";
  }
  for (const auto& b : list) {
    if (blocks)
      h += fmt::format(
          "<section class=\"block\" id=\"{}\"><h4>{} <a class=\"up\" href=\"#{}\">back to the heat "
          "map</a></h4>\n",
          block_id(p, b), block_title(b), p.id);
    h += "<figure class=\"panel-grid\">" + panel_grid(p, b) + "</figure>\n";
    if (blocks) h += "</section>\n";
  }
  h += "</section>\n</section>\n";
  return h;
}

}  // namespace vzero::detail::report
