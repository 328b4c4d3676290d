// The plate sections of the report: the rate heat map and the well panels.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "report/report_model.hpp"
#include "report/report_panel.hpp"
#include "vzero/svg.hpp"
#include "vzero/table.hpp"

namespace vzero::detail::report {

namespace {

using svg::Attrs;
using svg::Document;
using svg::escape;
using svg::human;

constexpr double k_left = 44, k_top = 16;  // row-label and scale-bar column, column-label row

// A rectangle of plate positions: rows [row0, row0 + rows) × columns [col0, col0 + cols).
struct Block {
  int row0 = 0, rows = 0, col0 = 0, cols = 0;
};

std::string join(const std::vector<std::string>& v, const char* sep) {
  std::string out;
  for (const auto& s : v) out += (out.empty() ? "" : sep) + s;
  return out;
}

}  // namespace

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
  std::vector<std::string> f;
  for (const auto& x : w.flags)
    if (x != "empty") f.push_back(x);
  t += "\nflags: " + (f.empty() ? std::string("none") : join(f, ", "));
  t += fmt::format("\nrates table line {}", w.line);
  return t;
}

namespace {

// The scale bar of a shared scale, in the margin left of one row of panels.
void row_scale_bar(Document& d, const PlateView& p, const YRange& r, double row_y) {
  const double value = scale_bar_value(r.hi - r.lo);
  if (!std::isfinite(value)) return;
  const double bottom = row_y + k_panel_top + k_plot_h, len = value / (r.hi - r.lo) * k_plot_h;
  const double x = k_left - 6;
  d.line(x, bottom, x, bottom - len, "scale-bar", {{"data-value", format_number(value)}, {"data-length", d.n(len)}});
  d.line(x - 2.5, bottom, x + 2.5, bottom, "scale-bar");
  d.line(x - 2.5, bottom - len, x + 2.5, bottom - len, "scale-bar");
  d.text(x - 5, bottom - len / 2, human(value) + " " + display_unit(p.y_unit), "scale-label", "middle", -90);
}

// The panels of one block of the plate, with row and column labels, scale bars and a time axis.
std::string panel_grid(const PlateView& p, Block b, PanelScale scale) {
  const double width = k_left + b.cols * (k_panel_w + k_gap) + 4;
  const double grid_h = b.rows * (k_panel_h + k_gap);
  const double height = k_top + grid_h + 34;
  const YRange shared = plate_y_range(p);
  Document d(width, height);
  for (int c = 0; c < b.cols; ++c)
    d.text(k_left + c * (k_panel_w + k_gap) + k_panel_w / 2, 11, std::to_string(b.col0 + c + 1), "grid-label",
           "middle");
  for (int r = 0; r < b.rows; ++r) {
    const double y = k_top + r * (k_panel_h + k_gap);
    d.text(2, y + 11, row_label(b.row0 + r), "grid-label", "start");
    if (scale == PanelScale::plate) row_scale_bar(d, p, shared, y);
    for (int c = 0; c < b.cols; ++c) {
      const double x = k_left + c * (k_panel_w + k_gap);
      WellId id{b.row0 + r, b.col0 + c};
      auto it = p.by_index.find(p.format.index(id));
      if (it == p.by_index.end()) {
        d.rect(x, y, k_panel_w, k_panel_h, "unread-well");
        d.text(x + k_panel_w / 2, y + k_panel_h / 2 + 3, well_name(id) + " not read", "wnote", "middle");
        continue;
      }
      draw_panel(d, p, p.wells[it->second], x, y, panel_range(p.wells[it->second], shared, scale));
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

// The key to the panels' marks, in two lines.
std::string panel_key() {
  Document d(900, 42);
  double x = 4, y = 15;
  auto label = [&](const std::string& text) {
    d.text(x, y, text, "key");
    x += 5.6 * static_cast<double>(text.size()) + 22;
  };
  d.rect(x, y - 11, 18, 14, "window");
  x += 24;
  label("accepted window");
  d.rect(x, y - 11, 18, 14, "window-ext");
  x += 24;
  label("further reads of a tangent's parabola");
  d.line(x, y - 4, x + 18, y - 4, "fit-line");
  x += 24;
  label("fitted line or parabola");
  d.line(x, y - 4, x + 18, y - 4, "fit-line tangent");
  x += 24;
  label("initial tangent = v0 (curving wells)");
  x = 4, y = 35;
  d.markers({{x + 4, y - 4}}, svg::Marker::dot, 1.6, "used");
  x += 12;
  label("read used");
  d.markers({{x + 4, y - 4}}, svg::Marker::cross, 3, "outlier");
  x += 14;
  label("read left out as outlier");
  d.markers({{x + 4, y - 4}}, svg::Marker::triangle, 3.2, "unread");
  x += 14;
  label("no value (overflow, missing)");
  d.rect(x, y - 11, 18, 14, "key-frame flagged");
  x += 24;
  label("sample well with a flag");
  d.line(x + 4, y + 2, x + 4, y - 11, "scale-bar");
  x += 12;
  label("scale bar");
  return d.str({{"class", "key"}, {"width", "900"}, {"role", "img"}, {"aria-label", "key to the well panels"}});
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
    flagged += w.distrusted();
    with_rate += std::isfinite(w.v0) && w.role != "empty";
  }
  std::string h = fmt::format("<section class=\"plate\" id=\"{}\">\n<h2>Plate {} \u00b7 channel {}</h2>\n", p.id,
                              escape(p.source), escape(p.channel));
  h += fmt::format(
      "<p class=\"lede\">{} wells read on a {}-well plate ({} rows \u00d7 {} columns); {} with a rate, {} sample wells "
      "flagged. "
      "v0 in {}; traces show {}.</p>\n",
      p.wells.size(), p.format.wells(), p.format.rows, p.format.columns, with_rate, flagged,
      escape(display_unit(p.v0_unit)),
      p.converted ? "the concentration formed in the reaction direction (" + escape(display_unit(p.y_unit)) + ")"
                  : "the blank-corrected signal in the reaction direction (" + escape(display_unit(p.y_unit)) + ")");
  h += "<figure class=\"heat\">" + heat_map(p) +
       "<figcaption>Rate heat map in plate geometry (rows A\u2026, columns 1\u2026). Colour: v0 on the scale at "
       "the right, light = slow, dark = fast; the scale spans the 2nd to 98th percentile of the rates, and rates "
       "beyond it take the end colour. A triangle marks a sample well with a flag. Each well links to its "
       "panel.</figcaption>"
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
  const YRange shared = plate_y_range(p);
  const std::string what = p.converted ? "concentration" : "signal change";
  h += o.scale == PanelScale::plate
           ? fmt::format(
                 "<p class=\"note\">One panel per well: {} against time, on one vertical scale for the whole plate "
                 "({} to {} {}; the bar left of each row is {} {}), so a flat well looks flat. Standards, and "
                 "wells whose trace leaves that range, have their own scale, labelled in their panels (grey "
                 "background), at least as tall as the plate's. The number at the top right is v0 ({}); flags are "
                 "written at the "
                 "bottom, and a sample well with a flag has an orange frame.</p>\n",
                 what, human(shared.lo, 3), human(shared.hi, 3), escape(display_unit(p.y_unit)),
                 human(scale_bar_value(shared.hi - shared.lo)), escape(display_unit(p.y_unit)),
                 escape(display_unit(p.v0_unit)))
           : fmt::format(
                 "<p class=\"note\">One panel per well: {} against time. Each panel has its own vertical scale ({}), "
                 "labelled at its left edge: compare panels by their labels, not their slopes. The number at the top "
                 "right is v0 ({}); flags are written at the bottom, and a sample well with a flag has an orange "
                 "frame.</p>\n",
                 what, escape(display_unit(p.y_unit)), escape(display_unit(p.v0_unit)));
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
    h += "<figure class=\"panel-grid\">" + panel_grid(p, b, o.scale) + "</figure>\n";
    if (blocks) h += "</section>\n";
  }
  h += "</section>\n</section>\n";
  return h;
}

}  // namespace vzero::detail::report
