// The chart layer of the SVG writer: axes and series on a Document, and the report's colours.
#include "vzero/svg.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <array>
#include <cmath>

namespace vzero::svg {

namespace {
struct Rgb {
  double r, g, b;  // linear light, 0..1
};

double to_linear(double c) { return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4); }
double to_srgb(double c) { return c <= 0.0031308 ? 12.92 * c : 1.055 * std::pow(c, 1 / 2.4) - 0.055; }

int hex_digit(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return 0;
}

Rgb parse_hex(std::string_view hex) {
  if (hex.size() != 7 || hex[0] != '#') return {0, 0, 0};
  auto byte = [&](int i) {
    return (hex_digit(hex[static_cast<std::size_t>(i)]) * 16 + hex_digit(hex[static_cast<std::size_t>(i + 1)])) / 255.0;
  };
  return {to_linear(byte(1)), to_linear(byte(3)), to_linear(byte(5))};
}

std::string to_hex(Rgb c) {
  auto byte = [](double v) { return static_cast<int>(std::lround(std::clamp(to_srgb(v), 0.0, 1.0) * 255)); };
  return fmt::format("#{:02x}{:02x}{:02x}", byte(c.r), byte(c.g), byte(c.b));
}

// Anchors of the sequential palette, light to dark: cream, sand, teal, steel blue, ink.
constexpr std::array<const char*, 5> k_anchors = {"#f6f1dc", "#e3c46e", "#4f9a8f", "#2f5d8f", "#1d2547"};
}  // namespace

// ---- Chart ----

Chart::Chart(Document& doc, Box area, Ticks x, Ticks y)
    : doc_(doc),
      area_(area),
      tx_(std::move(x)),
      ty_(std::move(y)),
      sx_{tx_.lo, tx_.hi, area.x, area.x + area.width},
      sy_{ty_.lo, ty_.hi, area.y + area.height, area.y} {}

void Chart::axes(std::string_view x_label, std::string_view y_label) {
  const Box& a = area_;
  doc_.open_group("axes");
  for (double v : ty_.values) doc_.line(a.x, y(v), a.x + a.width, y(v), "grid");
  doc_.rect(a.x, a.y, a.width, a.height, "frame");
  for (double v : tx_.values) {
    doc_.line(x(v), a.y + a.height, x(v), a.y + a.height + 4, "tick-mark");
    doc_.text(x(v), a.y + a.height + 15, tick_label(v, tx_), "tick", "middle");
  }
  for (double v : ty_.values) {
    doc_.line(a.x - 4, y(v), a.x, y(v), "tick-mark");
    doc_.text(a.x - 6, y(v) + 3.5, tick_label(v, ty_), "tick", "end");
  }
  doc_.text(a.x + a.width / 2, a.y + a.height + 32, x_label, "axis-title", "middle");
  // The y title sits left of the widest tick label.
  std::size_t widest = 0;
  for (double v : ty_.values) widest = std::max(widest, tick_label(v, ty_).size());
  double yx = a.x - 12 - 6.2 * static_cast<double>(widest);
  doc_.text(yx, a.y + a.height / 2, y_label, "axis-title", "middle", -90);
  doc_.close_group();
}

void Chart::hline(double v, std::string_view cls) { doc_.line(area_.x, y(v), area_.x + area_.width, y(v), cls); }

std::vector<Point> Chart::to_points(const std::vector<double>& xs, const std::vector<double>& ys) const {
  std::vector<Point> p;
  std::size_t n = std::min(xs.size(), ys.size());
  p.reserve(n);
  for (std::size_t i = 0; i < n; ++i)
    p.push_back(std::isfinite(xs[i]) && std::isfinite(ys[i]) ? Point{x(xs[i]), y(ys[i])} : Point{NAN, NAN});
  return p;
}

void Chart::polyline(const std::vector<double>& xs, const std::vector<double>& ys, std::string_view cls,
                     const Attrs& attrs) {
  doc_.polyline(to_points(xs, ys), cls, attrs);
}

void Chart::markers(const std::vector<double>& xs, const std::vector<double>& ys, Marker shape, double size,
                    std::string_view cls, const Attrs& attrs) {
  doc_.markers(to_points(xs, ys), shape, size, cls, attrs);
}

void Chart::band(const std::vector<double>& xs, const std::vector<double>& lower, const std::vector<double>& upper,
                 std::string_view cls, const Attrs& attrs) {
  std::vector<Point> p = to_points(xs, upper);
  std::vector<Point> low = to_points(xs, lower);
  p.insert(p.end(), low.rbegin(), low.rend());
  doc_.polygon(p, cls, attrs);
}

void Chart::vband(double x0, double x1, std::string_view cls, const Attrs& attrs) {
  double a = std::clamp(x(x0), area_.x, area_.x + area_.width);
  double b = std::clamp(x(x1), area_.x, area_.x + area_.width);
  doc_.rect(std::min(a, b), area_.y, std::fabs(b - a), area_.height, cls, attrs);
}

// ---- Colour ----

std::string sequential(double t) {
  if (!std::isfinite(t)) t = 0;
  t = std::clamp(t, 0.0, 1.0);
  const double pos = t * static_cast<double>(k_anchors.size() - 1);
  std::size_t i = std::min(static_cast<std::size_t>(pos), k_anchors.size() - 2);
  const double f = pos - static_cast<double>(i);
  // Interpolating in linear light keeps the luminance of each stretch linear in t, so it
  // falls monotonically when the anchors' luminances do.
  Rgb a = parse_hex(k_anchors[i]), b = parse_hex(k_anchors[i + 1]);
  return to_hex({a.r + f * (b.r - a.r), a.g + f * (b.g - a.g), a.b + f * (b.b - a.b)});
}

double luminance(std::string_view hex) {
  Rgb c = parse_hex(hex);
  return 0.2126 * c.r + 0.7152 * c.g + 0.0722 * c.b;
}

std::string ink_on(std::string_view background_hex) {
  // WCAG contrast ratio (L1 + 0.05)/(L2 + 0.05) against black and against white.
  double l = luminance(background_hex);
  double with_black = (l + 0.05) / 0.05, with_white = 1.05 / (l + 0.05);
  return with_black >= with_white ? "#000000" : "#ffffff";
}

}  // namespace vzero::svg
