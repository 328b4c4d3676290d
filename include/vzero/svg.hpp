// A small SVG writer for the run report: escaping, deterministic number text, nice axis
// ticks, linear scales, a document builder (rect, line, polyline, markers, band, text) and
// a chart with axes on top of it, plus the report's palettes.
//
// Everything is plain text generation with no state beyond the builder's buffer: the same
// calls give the same bytes on every platform (numbers go through fmt's locale-free
// formatting, never through iostreams or printf with a locale).
//
// Nice ticks follow Heckbert's "Nice numbers for graph labels" (Graphics Gems, 1990): the
// step is 1, 2 or 5 × 10^k, chosen so that about `target` ticks cover [lo, hi], and the
// axis runs from the first multiple of the step at or below lo to the first at or above hi.
//
// **Example**:
//   vzero::svg::Ticks t = vzero::svg::nice_ticks(0, 600, 5);   // 0, 200, 400, 600; step 200
//   vzero::svg::Document doc(320, 200);
//   vzero::svg::Chart c(doc, {48, 10, 260, 150}, t, vzero::svg::nice_ticks(0, 12, 5));
//   c.axes("time (s)", "product (µM)");
//   c.polyline(xs, ys, "trace");
//   std::string text = doc.str();   // "<svg viewBox=\"0 0 320 200\" ...>...</svg>"
//
// The markup is meant for inline use in an HTML5 page, so <svg> carries no xmlns (the HTML
// parser puts it in the SVG namespace) and the report holds no URL at all.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

namespace vzero::svg {

// `text` with & < > " ' replaced by entity references: safe in element content and in
// attribute values of both HTML and XML. Bytes that are not allowed in XML 1.0 (control
// characters other than tab, LF and CR) are dropped.
std::string escape(std::string_view text);

// Coordinate text: `v` rounded to `decimals` decimals (0–6), trailing zeros and a trailing
// '.' dropped, "-0" written "0". num(12.50) == "12.5", num(-0.004) == "0",
// num(3.14159, 3) == "3.142". Non-finite values are written "0" (callers skip them first).
std::string num(double v, int decimals = 1);

// Text of a value for people: `significant` significant digits, no exponent between 1e-4
// and 1e6 (exclusive), a true minus sign (U+2212), trailing zeros dropped.
// human(0.000123456) == "0.0001235", human(-2.5) == "−2.5", human(1234567) == "1.235e6".
// NaN gives "–" (an en dash).
std::string human(double v, int significant = 4);

// Axis ticks.
struct Ticks {
  double lo = 0, hi = 1;       // axis range: the outermost ticks
  double step = 0.2;           // distance between ticks
  int decimals = 1;            // decimals a label needs to tell ticks apart
  std::vector<double> values;  // from lo to hi inclusive, each a multiple of step
};

// Heckbert's loose labelling of [lo, hi] with about `target` ticks (target ≥ 2). lo > hi
// is swapped; lo == hi widens to a range around the value (±1 around 0, else ±10 %);
// non-finite input gives the ticks of [0, 1].
// nice_ticks(0, 1, 5):       0, 0.2, 0.4, 0.6, 0.8, 1   (step 0.2, 1 decimal)
// nice_ticks(-3.7, 12.2, 5): −5, 0, 5, 10, 15           (step 5)
Ticks nice_ticks(double lo, double hi, int target = 5);

// Tick label: the value with the ticks' decimals (exponent form when the step is below
// 1e-4 or the values reach 1e6), true minus sign, "0" for zero.
std::string tick_label(double v, const Ticks& ticks);

// Maps [d0, d1] linearly onto [r0, r1] (d0 == d1 maps everything to the middle).
struct Scale {
  double d0 = 0, d1 = 1, r0 = 0, r1 = 1;
  double operator()(double v) const;
};

struct Point {
  double x = 0, y = 0;
};

// Marker shapes (drawn as strokes so that one <path> holds many markers).
enum class Marker { dot, circle, square, diamond, triangle, cross, plus };

// The k-th series of a chart (inhibitor or enzyme levels): a colour of the Okabe–Ito palette
// (colour-blind safe; cycles after 7) and a marker shape (cycles after 6), so that series
// differ in more than colour.
const char* series_colour(std::size_t k);
Marker series_marker(std::size_t k);

// An attribute list appended to an element; values are escaped.
struct Attr {
  std::string name, value;
};
using Attrs = std::vector<Attr>;

// Builds one <svg> element. Coordinates are in viewBox units (0 0 width height).
class Document {
 public:
  Document(double width, double height, int decimals = 1);
  double width() const { return width_; }
  double height() const { return height_; }
  int decimals() const { return decimals_; }

  // <g class=…> … </g>; groups nest.
  void open_group(std::string_view cls, const Attrs& attrs = {});
  void close_group();
  void rect(double x, double y, double w, double h, std::string_view cls, const Attrs& attrs = {});
  void line(double x1, double y1, double x2, double y2, std::string_view cls, const Attrs& attrs = {});
  // A polyline; points with a non-finite coordinate break it into separate pieces.
  void polyline(const std::vector<Point>& points, std::string_view cls, const Attrs& attrs = {});
  // A closed polygon (e.g. a confidence band); non-finite points are skipped.
  void polygon(const std::vector<Point>& points, std::string_view cls, const Attrs& attrs = {});
  // One <path> holding a marker of `size` (its half-width) at every finite point.
  void markers(const std::vector<Point>& points, Marker shape, double size, std::string_view cls,
               const Attrs& attrs = {});
  // `anchor` is "start", "middle" or "end"; `rotate` turns the text about (x, y) in degrees.
  void text(double x, double y, std::string_view content, std::string_view cls, std::string_view anchor = "start",
            double rotate = 0, const Attrs& attrs = {});
  // <title> of the enclosing element: a tooltip in browsers (plain text, escaped).
  void title(std::string_view content);
  // <a href="#id"> … </a> around what follows until close_link(); only in-page links.
  void open_link(std::string_view fragment_id);
  void close_link();
  // Markup written as is (the caller escapes).
  void raw(std::string_view markup);

  // The whole element; `attrs` go on the <svg> tag (role, aria-label, class, width…).
  std::string str(const Attrs& attrs = {}) const;

  // Number text at this document's precision.
  std::string n(double v) const { return num(v, decimals_); }

 private:
  void open_tag(std::string_view tag, std::string_view cls, const Attrs& attrs);
  double width_, height_;
  int decimals_;
  std::string body_;
  int depth_ = 0;
};

// A rectangle in viewBox units.
struct Box {
  double x = 0, y = 0, width = 100, height = 100;
};

// A plot area with two linear axes whose ranges are the ticks' lo..hi.
class Chart {
 public:
  Chart(Document& doc, Box area, Ticks x, Ticks y);
  double x(double v) const { return sx_(v); }
  double y(double v) const { return sy_(v); }
  const Box& area() const { return area_; }
  const Ticks& x_ticks() const { return tx_; }
  const Ticks& y_ticks() const { return ty_; }

  // Frame, grid lines, tick marks with labels, and axis titles (units in the titles).
  void axes(std::string_view x_label, std::string_view y_label);
  // A horizontal reference line at y = v (e.g. zero residual).
  void hline(double v, std::string_view cls);
  void polyline(const std::vector<double>& xs, const std::vector<double>& ys, std::string_view cls,
                const Attrs& attrs = {});
  void markers(const std::vector<double>& xs, const std::vector<double>& ys, Marker shape, double size,
               std::string_view cls, const Attrs& attrs = {});
  // The region between `lower` and `upper` over `xs` (all three the same length).
  void band(const std::vector<double>& xs, const std::vector<double>& lower, const std::vector<double>& upper,
            std::string_view cls, const Attrs& attrs = {});
  // A full-height shaded strip from x0 to x1 (data units).
  void vband(double x0, double x1, std::string_view cls, const Attrs& attrs = {});

 private:
  std::vector<Point> to_points(const std::vector<double>& xs, const std::vector<double>& ys) const;
  Document& doc_;
  Box area_;
  Ticks tx_, ty_;
  Scale sx_, sy_;
};

// ---- Colour ----

// The report's sequential palette, from pale cream (t = 0) through sand, teal and blue to
// deep ink (t = 1), interpolated between five anchors chosen for this project with
// relative luminance falling monotonically, so the order reads in grey and for every
// colour-vision type. `t` is clamped to [0, 1]. Returns "#rrggbb".
std::string sequential(double t);
// WCAG 2 relative luminance of "#rrggbb" (0 black … 1 white).
double luminance(std::string_view hex);
// "#000000" or "#ffffff", whichever reads better on `background_hex`.
std::string ink_on(std::string_view background_hex);

// The eight colours of Okabe & Ito (2008), "Color Universal Design", distinguishable
// under the common colour-vision deficiencies: black, orange, sky blue, bluish green,
// yellow, blue, vermillion, reddish purple.
inline constexpr const char* k_okabe_ito[8] = {"#000000", "#E69F00", "#56B4E9", "#009E73",
                                               "#F0E442", "#0072B2", "#D55E00", "#CC79A7"};

}  // namespace vzero::svg
