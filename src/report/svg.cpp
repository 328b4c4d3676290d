#include "vzero/svg.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cassert>
#include <cmath>

namespace vzero::svg {

namespace {

constexpr const char* k_minus = "\u2212";

// Drops trailing zeros after a decimal point, then the point itself.
void trim_zeros(std::string& s) {
  if (s.find('.') == std::string::npos) return;
  std::size_t e = s.find_first_of("eE");
  std::string tail = e == std::string::npos ? "" : s.substr(e);
  std::string head = e == std::string::npos ? s : s.substr(0, e);
  while (!head.empty() && head.back() == '0') head.pop_back();
  if (!head.empty() && head.back() == '.') head.pop_back();
  s = head + tail;
}

// "1.5e-05" → "1.5e-5", "2e+06" → "2e6".
void tidy_exponent(std::string& s) {
  std::size_t e = s.find('e');
  if (e == std::string::npos) return;
  std::string mant = s.substr(0, e), ex = s.substr(e + 1);
  bool neg = !ex.empty() && ex[0] == '-';
  if (!ex.empty() && (ex[0] == '-' || ex[0] == '+')) ex.erase(0, 1);
  while (ex.size() > 1 && ex[0] == '0') ex.erase(0, 1);
  trim_zeros(mant);
  s = mant + "e" + (neg ? "-" : "") + ex;
}

std::string with_true_minus(std::string s) {
  if (!s.empty() && s[0] == '-') s = std::string(k_minus) + s.substr(1);
  // The exponent's sign stays ASCII: "1e-5" is how people type it.
  return s;
}

// Heckbert's nicenum: a 1, 2 or 5 × 10^k near x; `round` picks the nearest, otherwise
// the smallest not below x.
double nice_number(double x, bool round, int& exponent, double& fraction_out) {
  exponent = static_cast<int>(std::floor(std::log10(x)));
  double f = x / std::pow(10.0, exponent);
  double nf;
  if (round)
    nf = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
  else
    nf = f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10;
  if (nf == 10) nf = 1, ++exponent;
  fraction_out = nf;
  return exponent >= 0 ? nf * std::pow(10.0, exponent) : nf / std::pow(10.0, -exponent);
}

// k · (nf × 10^e), computed so that decimal steps stay exact where they can (0.1·3 is
// written as 3/10, not 0.30000000000000004).
double multiple(long long k, double nf, int e) {
  double m = static_cast<double>(k) * nf;
  return e >= 0 ? m * std::pow(10.0, e) : m / std::pow(10.0, -e);
}

}  // namespace

std::string escape(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&#39;";
        break;
      default:
        if (static_cast<unsigned char>(c) < 0x20 && c != '\t' && c != '\n' && c != '\r') break;
        out += c;
    }
  }
  return out;
}

std::string num(double v, int decimals) {
  if (!std::isfinite(v)) return "0";
  decimals = std::clamp(decimals, 0, 6);
  std::string s = fmt::format("{:.{}f}", v, decimals);
  trim_zeros(s);
  if (s == "-0") s = "0";
  return s;
}

std::string human(double v, int significant) {
  if (std::isnan(v)) return "\u2013";
  if (std::isinf(v)) return v > 0 ? "\u221e" : std::string(k_minus) + "\u221e";
  significant = std::clamp(significant, 1, 17);
  if (v == 0) return "0";
  double a = std::fabs(v);
  std::string s;
  if (a >= 1e-4 && a < 1e6) {
    int e = static_cast<int>(std::floor(std::log10(a)));
    int decimals = std::max(0, significant - 1 - e);
    s = fmt::format("{:.{}f}", v, decimals);
    trim_zeros(s);
    // Rounding may carry into a new digit (9.99995 → "10"); still fine for people.
    if (s == "-0") s = "0";
  } else {
    s = fmt::format("{:.{}e}", v, significant - 1);
    tidy_exponent(s);
  }
  return with_true_minus(s);
}

Ticks nice_ticks(double lo, double hi, int target) {
  if (!std::isfinite(lo) || !std::isfinite(hi)) lo = 0, hi = 1;
  if (lo > hi) std::swap(lo, hi);
  if (lo == hi) {
    double d = lo == 0 ? 1 : std::fabs(lo) * 0.1;
    lo -= d, hi += d;
  }
  target = std::max(target, 2);
  int e_range = 0, e_step = 0;
  double f_range = 0, f_step = 0;
  double range = nice_number(hi - lo, false, e_range, f_range);
  double step = nice_number(range / (target - 1), true, e_step, f_step);
  // Ticks are k·step for k from floor(lo/step) to ceil(hi/step); the small slack keeps a
  // value that is a multiple up to rounding (0.6/0.2 = 2.9999999999999996) on its tick.
  const double eps = 1e-9;
  long long k0 = static_cast<long long>(std::floor(lo / step + eps));
  long long k1 = static_cast<long long>(std::ceil(hi / step - eps));
  Ticks t;
  t.step = step;
  t.decimals = std::max(-e_step, 0);
  for (long long k = k0; k <= k1; ++k) t.values.push_back(multiple(k, f_step, e_step));
  t.lo = t.values.front();
  t.hi = t.values.back();
  return t;
}

std::string tick_label(double v, const Ticks& t) {
  if (v == 0 || std::fabs(v) < t.step * 1e-9) return "0";
  double reach = std::max(std::fabs(t.lo), std::fabs(t.hi));
  if (t.step < 1e-4 || reach >= 1e6) {
    // Enough significant digits to tell neighbouring ticks apart.
    int digits =
        static_cast<int>(std::floor(std::log10(std::fabs(v)))) - static_cast<int>(std::floor(std::log10(t.step))) + 1;
    std::string s = fmt::format("{:.{}e}", v, std::clamp(digits - 1, 0, 15));
    tidy_exponent(s);
    return with_true_minus(s);
  }
  std::string s = fmt::format("{:.{}f}", v, t.decimals);
  return with_true_minus(s);
}

double Scale::operator()(double v) const {
  if (d1 == d0) return (r0 + r1) / 2;
  return r0 + (v - d0) * (r1 - r0) / (d1 - d0);
}

// ---- Document ----

Document::Document(double width, double height, int decimals) : width_(width), height_(height), decimals_(decimals) {}

void Document::open_tag(std::string_view tag, std::string_view cls, const Attrs& attrs) {
  body_ += '<';
  body_ += tag;
  if (!cls.empty()) {
    body_ += " class=\"";
    body_ += escape(cls);
    body_ += '"';
  }
  for (const auto& a : attrs) {
    body_ += ' ';
    body_ += a.name;
    body_ += "=\"";
    body_ += escape(a.value);
    body_ += '"';
  }
}

void Document::open_group(std::string_view cls, const Attrs& attrs) {
  open_tag("g", cls, attrs);
  body_ += '>';
  ++depth_;
}

void Document::close_group() {
  assert(depth_ > 0);
  --depth_;
  body_ += "</g>";
}

void Document::rect(double x, double y, double w, double h, std::string_view cls, const Attrs& attrs) {
  Attrs all = {{"x", n(x)}, {"y", n(y)}, {"width", n(std::max(w, 0.0))}, {"height", n(std::max(h, 0.0))}};
  all.insert(all.end(), attrs.begin(), attrs.end());
  open_tag("rect", cls, all);
  body_ += "/>";
}

void Document::line(double x1, double y1, double x2, double y2, std::string_view cls, const Attrs& attrs) {
  Attrs all = {{"x1", n(x1)}, {"y1", n(y1)}, {"x2", n(x2)}, {"y2", n(y2)}};
  all.insert(all.end(), attrs.begin(), attrs.end());
  open_tag("line", cls, all);
  body_ += "/>";
}

void Document::polyline(const std::vector<Point>& points, std::string_view cls, const Attrs& attrs) {
  // Split at non-finite points; a piece of one point is not drawn.
  std::string d;
  std::size_t piece = 0;
  for (const auto& p : points) {
    if (!std::isfinite(p.x) || !std::isfinite(p.y)) {
      piece = 0;
      continue;
    }
    d += piece == 0 ? (d.empty() ? "M" : " M") : " L";
    d += n(p.x) + " " + n(p.y);
    ++piece;
  }
  if (d.find('L') == std::string::npos) return;
  Attrs all = {{"d", d}};
  all.insert(all.end(), attrs.begin(), attrs.end());
  open_tag("path", cls, all);
  body_ += "/>";
}

void Document::polygon(const std::vector<Point>& points, std::string_view cls, const Attrs& attrs) {
  std::string pts;
  int count = 0;
  for (const auto& p : points) {
    if (!std::isfinite(p.x) || !std::isfinite(p.y)) continue;
    if (!pts.empty()) pts += ' ';
    pts += n(p.x) + "," + n(p.y);
    ++count;
  }
  if (count < 3) return;
  Attrs all = {{"points", pts}};
  all.insert(all.end(), attrs.begin(), attrs.end());
  open_tag("polygon", cls, all);
  body_ += "/>";
}

void Document::markers(const std::vector<Point>& points, Marker shape, double s, std::string_view cls,
                       const Attrs& attrs) {
  std::string d;
  const std::string s1 = n(s), s2 = n(2 * s);
  for (const auto& p : points) {
    if (!std::isfinite(p.x) || !std::isfinite(p.y)) continue;
    switch (shape) {
      case Marker::dot:
        d += "M" + n(p.x) + " " + n(p.y) + "h0";
        break;
      case Marker::circle:
        d += "M" + n(p.x - s) + " " + n(p.y) + "a" + s1 + " " + s1 + " 0 1 0 " + s2 + " 0a" + s1 + " " + s1 +
             " 0 1 0 -" + s2 + " 0";
        break;
      case Marker::square:
        d += "M" + n(p.x - s) + " " + n(p.y - s) + "h" + s2 + "v" + s2 + "h-" + s2 + "z";
        break;
      case Marker::diamond:
        d += "M" + n(p.x) + " " + n(p.y - s) + "l" + s1 + " " + s1 + "l-" + s1 + " " + s1 + "l-" + s1 + " -" + s1 + "z";
        break;
      case Marker::triangle:
        d += "M" + n(p.x) + " " + n(p.y - s) + "l" + s1 + " " + n(1.8 * s) + "h-" + s2 + "z";
        break;
      case Marker::cross:
        d += "M" + n(p.x - s) + " " + n(p.y - s) + "l" + s2 + " " + s2 + "m0 -" + s2 + "l-" + s2 + " " + s2;
        break;
      case Marker::plus:
        d += "M" + n(p.x - s) + " " + n(p.y) + "h" + s2 + "m-" + s1 + " -" + s1 + "v" + s2;
        break;
    }
  }
  if (d.empty()) return;
  Attrs all = {{"d", d}};
  if (shape == Marker::dot) {
    // Zero-length segments with round caps draw as dots of the stroke's width.
    all.push_back({"stroke-width", s2});
    all.push_back({"stroke-linecap", "round"});
  }
  all.insert(all.end(), attrs.begin(), attrs.end());
  open_tag("path", cls, all);
  body_ += "/>";
}

void Document::text(double x, double y, std::string_view content, std::string_view cls, std::string_view anchor,
                    double rotate, const Attrs& attrs) {
  Attrs all = {{"x", n(x)}, {"y", n(y)}};
  if (anchor != "start" && !anchor.empty()) all.push_back({"text-anchor", std::string(anchor)});
  if (rotate != 0) all.push_back({"transform", "rotate(" + num(rotate, 2) + " " + n(x) + " " + n(y) + ")"});
  all.insert(all.end(), attrs.begin(), attrs.end());
  open_tag("text", cls, all);
  body_ += '>';
  body_ += escape(content);
  body_ += "</text>";
}

void Document::title(std::string_view content) {
  body_ += "<title>";
  body_ += escape(content);
  body_ += "</title>";
}

void Document::open_link(std::string_view fragment_id) {
  body_ += "<a href=\"#";
  body_ += escape(fragment_id);
  body_ += "\">";
  ++depth_;
}

void Document::close_link() {
  assert(depth_ > 0);
  --depth_;
  body_ += "</a>";
}

void Document::raw(std::string_view markup) { body_ += markup; }

std::string Document::str(const Attrs& attrs) const {
  assert(depth_ == 0);
  std::string out = "<svg viewBox=\"0 0 " + n(width_) + " " + n(height_) + "\"";
  for (const auto& a : attrs) out += " " + a.name + "=\"" + escape(a.value) + "\"";
  out += ">";
  out += body_;
  out += "</svg>";
  return out;
}

const char* series_colour(std::size_t k) {
  static const char* order[] = {"#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000"};
  return order[k % 7];
}

Marker series_marker(std::size_t k) {
  static const Marker order[] = {Marker::circle, Marker::square, Marker::diamond,
                                 Marker::triangle, Marker::plus, Marker::cross};
  return order[k % 6];
}

}  // namespace vzero::svg
