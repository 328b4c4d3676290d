// The figures of one fit in the report: v against S with the curve and its band, the
// residuals, and the double-reciprocal diagnostic; points the fit left out drawn apart.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <set>

#include "report/report_fit.hpp"
#include "report/report_model.hpp"
#include "vzero/fit.hpp"

namespace vzero::detail::report {

using svg::escape;
using svg::human;

// Levels of the inhibitor drawn as separate curves: the distinct values among the points
// (0 when there are none or the model has no inhibitor).
std::vector<double> levels_of(const std::vector<Obs>& pts, bool inhibition) {
  std::set<double> s;
  if (inhibition)
    for (const auto& p : pts)
      if (std::isfinite(p.inhibitor)) s.insert(p.inhibitor);
  if (s.empty()) s.insert(0.0);
  return {s.begin(), s.end()};
}

std::size_t level_index(const std::vector<double>& levels, double inhibitor) {
  for (std::size_t k = 0; k < levels.size(); ++k)
    if (levels[k] == inhibitor) return k;
  return 0;
}

namespace {

std::string level_label(const std::string& column, double level, const std::string& unit) {
  return fmt::format("{} = {}{}", column.empty() ? "I" : column, human(level), unit.empty() ? "" : " " + unit);
}

void legend(svg::Document& d, const std::vector<double>& levels, const svg::Box& a, const std::string& column,
            const std::string& unit) {
  if (levels.size() < 2) return;
  for (std::size_t k = 0; k < levels.size(); ++k) {
    const double y = a.y + 12 + 14 * static_cast<double>(k);
    d.markers({{a.x + 12, y - 3.5}}, svg::series_marker(k), 3.2, "legend-pt", {{"stroke", svg::series_colour(k)}});
    d.text(a.x + 20, y, level_label(column, levels[k], unit), "key");
  }
}

}  // namespace

FitCurve curve_of(const json& f) {
  FitCurve fc;
  fc.model = vzero::find_model(str_of(f, "model"));
  if (!fc.model) return fc;
  for (const auto& p : member(f, "parameters")) fc.params.push_back(num_of(p, "estimate"));
  const json& cov = member(f, "covariance");
  if (cov.is_array() && cov.size() == fc.params.size()) {
    const auto n = static_cast<Eigen::Index>(fc.params.size());
    fc.cov.resize(n, n);
    for (Eigen::Index a = 0; a < n; ++a)
      for (Eigen::Index b = 0; b < n; ++b) {
        const json& row = cov[static_cast<std::size_t>(a)];
        const bool ok =
            row.is_array() && row.size() == fc.params.size() && row[static_cast<std::size_t>(b)].is_number();
        fc.cov(a, b) = ok ? row[static_cast<std::size_t>(b)].get<double>() : NAN;
      }
  }
  fc.t = num_of(f, "t_quantile");
  if (!std::isfinite(fc.t) && num_of(f, "df") > 0) fc.t = student_t_quantile(0.975, num_of(f, "df"));
  return fc;
}

namespace {

// The points the fit left out, drawn hollow and grey in every chart that shows points.
void left_out_markers(svg::Chart& c, const FitPlot& fp, double (*x)(const Obs&),
                      double (*y)(const Obs&, const FitPlot&)) {
  if (fp.pts.left_out.empty()) return;
  std::vector<double> xs, ys;
  for (const auto& p : fp.pts.left_out) xs.push_back(x(p)), ys.push_back(y(p, fp));
  c.markers(xs, ys, svg::Marker::circle, 3.4, "pt left-out", {{"stroke", "#777777"}});
}

std::string figure(const svg::Document& d, const char* label, const std::string& caption) {
  return "<figure class=\"chart\">" + d.str({{"width", "480"}, {"role", "img"}, {"aria-label", label}}) +
         "<figcaption>" + caption + "</figcaption></figure>";
}

std::string left_out_caption(const FitPlot& fp) {
  if (fp.pts.left_out.empty()) return {};
  return fmt::format(" Grey open circles: {} well{} of this group the fit left out (flagged; see the fit's notes).",
                     fp.pts.left_out.size(), fp.pts.left_out.size() == 1 ? "" : "s");
}

std::string chart_rate(const FitPlot& fp) {
  const int k_samples = 161;
  std::vector<double> xs(k_samples);
  for (int k = 0; k < k_samples; ++k) xs[static_cast<std::size_t>(k)] = fp.tx.hi * k / (k_samples - 1);
  const auto L = fp.levels.size();
  std::vector<std::vector<double>> mid(L), lo(L), hi(L);
  double v_max = fp.v_max;
  for (std::size_t l = 0; l < L; ++l)
    for (double s : xs) {
      const double v = fp.fc.rate(s, fp.levels[l]), h = fp.fc.half_width(s, fp.levels[l]);
      mid[l].push_back(v), lo[l].push_back(v - h), hi[l].push_back(v + h);
      v_max = std::max({v_max, v, std::isfinite(h) ? v + h : v});
    }
  svg::Document d(480, 330);
  svg::Chart c(d, {70, 12, 390, 262}, fp.tx, svg::nice_ticks(0, v_max * 1.04, 6));
  c.axes("substrate S (" + fp.xu + ")", "v (" + fp.vu + ")");
  for (std::size_t l = 0; l < L; ++l) c.band(xs, lo[l], hi[l], "ci-band", {{"fill", svg::series_colour(l)}});
  for (std::size_t l = 0; l < L; ++l) c.polyline(xs, mid[l], "fit-curve", {{"stroke", svg::series_colour(l)}});
  left_out_markers(
      c, fp, [](const Obs& p) { return p.s; }, [](const Obs& p, const FitPlot&) { return p.v; });
  for (std::size_t l = 0; l < L; ++l) {
    std::vector<double> sx, vy;
    for (const auto& p : fp.pts.used)
      if (fp.level_of(p) == l) sx.push_back(p.s), vy.push_back(p.v);
    c.markers(sx, vy, svg::series_marker(l), 3, "pt", {{"stroke", svg::series_colour(l)}});
  }
  legend(d, fp.levels,
         {c.x(fp.tx.values.back()) - 150, c.area().y + c.area().height - 18 - 14.0 * static_cast<double>(L), 150, 0},
         fp.icol, fp.i_unit);
  const bool band = fp.fc.cov.rows() > 0;
  return figure(d, "rate against substrate",
                "Rates against substrate with the fitted curve" + std::string(L > 1 ? "s" : "") +
                    (band ? " and the pointwise 95 % confidence band of the curve (delta method from the fit's "
                            "covariance)."
                          : "; no confidence band (the fit table records no covariance: give the fit's JSON).") +
                    left_out_caption(fp));
}

std::string chart_residuals(const FitPlot& fp) {
  double r_max = 0;
  for (const auto& p : fp.pts.used)
    if (double r = p.v - fp.fitted(p); std::isfinite(r)) r_max = std::max(r_max, std::fabs(r));
  if (r_max == 0) r_max = 1;
  svg::Document d(480, 236);
  svg::Chart c(d, {70, 12, 390, 168}, fp.tx, svg::nice_ticks(-r_max * 1.05, r_max * 1.05, 5));
  c.axes("substrate S (" + fp.xu + ")", "v \u2212 v\u0302 (" + fp.vu + ")");
  c.hline(0, "zero");
  for (std::size_t l = 0; l < fp.levels.size(); ++l) {
    std::vector<double> sx, ry;
    for (const auto& p : fp.pts.used)
      if (fp.level_of(p) == l) sx.push_back(p.s), ry.push_back(p.v - fp.fitted(p));
    c.markers(sx, ry, svg::series_marker(l), 3, "pt", {{"stroke", svg::series_colour(l)}});
  }
  return figure(
      d, "residuals",
      "Residuals of the fitted points: observed minus fitted rate. A trend with S says the model misses something.");
}

std::string chart_reciprocal(const FitPlot& fp) {
  double u_max = 0, w_max = 0;
  for (const auto& p : fp.pts.used)
    if (p.s > 0 && p.v > 0) u_max = std::max(u_max, 1 / p.s), w_max = std::max(w_max, 1 / p.v);
  if (u_max <= 0) u_max = 1 / std::max(fp.tx.values.size() > 1 ? fp.tx.values[1] : 1.0, 1e-12);
  std::vector<double> grid;
  const double u0 = fp.fc.model->saturates ? 0 : u_max / 40;
  for (int k = 0; k <= 80; ++k) grid.push_back(u0 + (u_max * 1.04 - u0) * k / 80);
  std::vector<std::vector<double>> inv(fp.levels.size());
  for (std::size_t l = 0; l < fp.levels.size(); ++l)
    for (double u : grid) {
      // u = 0 is S → ∞: a substrate far beyond the data stands in for the limit.
      const double s = u > 0 ? 1 / u : 1e9 * std::max(fp.s_max, 1e-300);
      const double v = fp.fc.rate(s, fp.levels[l]);
      inv[l].push_back(v > 0 ? 1 / v : NAN);
      if (v > 0) w_max = std::max(w_max, 1 / v);
    }
  svg::Document d(480, 330);
  svg::Chart c(d, {70, 12, 390, 262}, svg::nice_ticks(0, u_max * 1.04, 6), svg::nice_ticks(0, w_max * 1.04, 6));
  c.axes("1/S (1/" + fp.xu + ")",
         "1/v (" + (fp.v_stem.empty() ? "1/(" + fp.vu + ")" : "min/" + display_unit(fp.v_stem)) + ")");
  for (std::size_t l = 0; l < fp.levels.size(); ++l)
    c.polyline(grid, inv[l], "fit-curve", {{"stroke", svg::series_colour(l)}});
  for (std::size_t l = 0; l < fp.levels.size(); ++l) {
    std::vector<double> a, b;
    for (const auto& p : fp.pts.used)
      if (p.s > 0 && p.v > 0 && fp.level_of(p) == l) a.push_back(1 / p.s), b.push_back(1 / p.v);
    c.markers(a, b, svg::series_marker(l), 3, "pt", {{"stroke", svg::series_colour(l)}});
  }
  legend(d, fp.levels, {c.area().x, c.area().y, 150, 0}, fp.icol, fp.i_unit);
  return figure(d, "double-reciprocal diagnostic",
                "Double-reciprocal (Lineweaver\u2013Burk) plot, a diagnostic only: the lines are the nonlinear "
                "estimate redrawn in these coordinates, not a straight-line fit.");
}

}  // namespace

std::string fit_charts(const FitPlot& fp) { return chart_rate(fp) + chart_residuals(fp) + chart_reciprocal(fp); }

}  // namespace vzero::detail::report
