// One well panel of the report: its vertical scale, its fitted line or curve, and the
// drawing. Only report_plate.cpp and report_panel.cpp use this.
#pragma once

#include "report/report_model.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

// Panel geometry, in viewBox units (about CSS pixels on screen).
constexpr double k_panel_w = 104, k_panel_h = 90, k_gap = 4;
constexpr double k_panel_top = 15, k_panel_bottom = 20;  // name and v0 above, two lines of flags below
// The plot area's height, the same in every panel.
constexpr double k_plot_h = k_panel_h - k_panel_top - k_panel_bottom;
constexpr double k_pad = 0.08;  // share of the range added above and below the drawn values

// A panel's vertical range in drawn units (already padded).
struct YRange {
  double lo = 0, hi = 1;
  bool own = false;  // the well's own range (per-well scale, or a standard on a shared plate)
};

// The drawn values' range: every finite trace value and the fitted line's ends, padded by
// k_pad of the span on each side ([v − 0.5, v + 0.5] for a flat trace).
YRange well_y_range(const WellView& w);
// The shared range of a plate's wells other than standards (whose concentrations are fixed
// and far above any rate's product): from the lowest to the highest value of all of them
// below k_trim_wells wells, else from the 5th percentile of the wells' lowest values to
// the 95th of their highest (nearest rank), widened to every well's lowest and highest
// value within k_reach of that span beyond it, padded the same way.
constexpr std::size_t k_trim_wells = 20;
constexpr double k_reach = 0.25;
YRange plate_y_range(const PlateView& p);
// Whether every drawn value of `w` lies inside r (else the well gets its own scale).
bool fits_in(const WellView& w, const YRange& r);

// The scale bar's length: the largest 1, 2 or 5 × 10^k not above half the span.
double scale_bar_value(double span);

// The least-squares parabola through a tangent well's used reads (drawn units, time
// centred on tm): the curve whose initial tangent is the well's v0.
struct Parabola {
  bool ok = false;
  double tm = 0, c0 = NAN, c1 = NAN, c2 = NAN;
  double at(double t) const { return c0 + c1 * (t - tm) + c2 * (t - tm) * (t - tm); }
};
Parabola fit_parabola(const WellView& w);

// Draws the panel of `w` with its top-left corner at (x, y).
void draw_panel(svg::Document& d, const PlateView& p, const WellView& w, double x, double y, const YRange& range);

}  // namespace vzero::detail::report
