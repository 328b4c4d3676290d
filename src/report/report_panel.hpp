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
constexpr double k_used_dot_radius = 1.1;  // a used read's dot
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
// The same from the drawn_extent of each well other than a standard that has values.
YRange shared_y_range(std::vector<double> lows, std::vector<double> highs);
// The drawn values' extent (trace and fitted line), unpadded; NaN when the well has none.
std::pair<double, double> drawn_extent(const WellView& w);
// Whether every drawn value of `w` lies inside r (else the well gets its own scale).
bool fits_in(const WellView& w, const YRange& r);

// The range a well's panel is drawn on, given the plate's shared range: the shared one,
// or (per-well scales, standards, wells that leave it) the well's own, on a shared plate
// at least as tall as the plate's and centred on the well's values.
YRange panel_range(const WellView& w, const YRange& shared, PanelScale scale);

// The scale bar's length: the largest 1, 2 or 5 × 10^k not above half the span.
double scale_bar_value(double span);

// The least-squares parabola through a tangent well's used reads (drawn units, time
// centred on tm): the curve whose initial tangent is the well's v0. Called on the reads
// before thinning (WellView::parabola keeps it).
using Parabola = WellView::Parabola;
Parabola fit_parabola(const WellView& w);

// Thinning (src/report/report_thin.cpp): keeps of each well's reads only what its panel
// can show. The plot is k_panel_w − 6 units wide; it is cut into k_thin_columns per unit
// (2: a column is half a CSS pixel), and used dots are kept at least every k_thin_dot_step
// units vertically. Every well's last_used_s and parabola must be set first (from all
// reads). Returns the number of reads dropped.
constexpr double k_thin_columns = 2, k_thin_dot_step = 0.5;
std::size_t thin_plate(PlateView& p, PanelScale scale);
// What is taken from every read before thinning: the last used read and a tangent well's parabola.
void take_from_all_reads(WellView& w);
// One well of thin_plate: `sx` the plate's time scale, `shared` its shared range. Returns
// the number of reads dropped.
std::size_t thin_well(WellView& w, const svg::Scale& sx, const YRange& shared, PanelScale scale);
// The reads of one well to keep: indices into its vectors, ascending (thin_plate's rule),
// for a panel drawn on `sx` (time) and `sy` (values).
std::vector<std::size_t> kept_reads(const WellView& w, const svg::Scale& sx, const svg::Scale& sy,
                                    double columns_per_unit, double dot_step);

// Draws the panel of `w` with its top-left corner at (x, y).
void draw_panel(svg::Document& d, const PlateView& p, const WellView& w, double x, double y, const YRange& range);

}  // namespace vzero::detail::report
