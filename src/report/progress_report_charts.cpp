// The figures of the progress-curve report: each well's reads with its fitted curves, and
// product against [E]·t for Selwyn's test.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "report/report_model.hpp"
#include "report/progress_charts.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

namespace {

using svg::human;

// The lower and upper finite values of several series.
std::pair<double, double> range_of(std::initializer_list<const std::vector<double>*> series) {
  double lo = INFINITY, hi = -INFINITY;
  for (const auto* s : series)
    for (double v : *s)
      if (std::isfinite(v)) lo = std::min(lo, v), hi = std::max(hi, v);
  if (!std::isfinite(lo)) lo = 0, hi = 1;
  return {lo, hi};
}

std::vector<double> minutes(const std::vector<double>& t_s) {
  std::vector<double> out;
  for (double t : t_s) out.push_back(t / 60);
  return out;
}

std::string one_panel(const ProgressTable& t, const ProgressGroup& g, std::size_t w, const ProgressTableOptions& o) {
  const ProgressWell& pw = g.wells[w];
  auto [t_lo, t_hi] = range_of({&pw.t_s, &pw.t_left_s});
  std::vector<double> grid;
  for (int k = 0; k <= 120; ++k) grid.push_back(t_lo + (t_hi - t_lo) * k / 120.0);
  const std::vector<double> mm = progress_curve(g.mm, w, pw, o.fit.lead_s, grid);
  const std::vector<double> pi = progress_curve(g.pi, w, pw, o.fit.lead_s, grid);
  auto [p_lo, p_hi] = range_of({&pw.p, &pw.p_left, &mm, &pi});
  svg::Document d(250, 190);
  svg::Chart c(d, {50, 24, 186, 118}, svg::nice_ticks(t_lo / 60, t_hi / 60, 4), svg::nice_ticks(p_lo, p_hi, 5));
  c.axes("time (min)", "product (" + display_unit(t.conc_unit) + ")");
  std::string head = fmt::format("{} · S0 {}", pw.well, human(pw.s0));
  if (std::isfinite(pw.enzyme)) head += " · E " + human(pw.enzyme);
  d.text(50, 15, head, "wname");
  const std::vector<double> grid_min = minutes(grid);
  c.markers(minutes(pw.t_s), pw.p, svg::Marker::dot, 1.6, "used");
  if (!pw.p_left.empty()) c.markers(minutes(pw.t_left_s), pw.p_left, svg::Marker::circle, 2.6, "outlier");
  if (g.pi.ok) c.polyline(grid_min, pi, "fit-line tangent");
  c.polyline(grid_min, mm, "fit-curve-well");
  const std::string label =
      fmt::format("well {}: {} reads fitted, {} left out", pw.well, pw.p.size(), pw.p_left.size());
  return "<figure class=\"chart-small\">" + d.str({{"role", "img"}, {"aria-label", label}}) + "</figure>\n";
}

}  // namespace

std::string progress_well_panels(const ProgressTable& t, const ProgressGroup& g, const ProgressTableOptions& o) {
  std::string h = "<div class=\"fit-figures\">\n";
  for (std::size_t w = 0; w < g.wells.size(); ++w) h += one_panel(t, g, w, o);
  h += "</div>\n<p class=\"note\">Black dots: reads fitted. Orange rings: reads left out (only the rate finder's "
       "trusted reads enter a well noted for spikes, overflow, a disturbed start or a lag). Blue line: the "
       "Michaelis–Menten progress curve";
  if (g.pi.ok) h += "; dashed: with product inhibition";
  h += ".</p>\n";
  return h;
}

std::string stability_chart(const ProgressTable& t, const ProgressGroup& g, const StabilityTest& s) {
  std::vector<std::vector<double>> us(s.levels.size()), ps(s.levels.size());
  double u_hi = 0;
  for (std::size_t w = 0; w < g.wells.size(); ++w) {
    const ProgressWell& pw = g.wells[w];
    if (pw.s0 != s.s0) continue;
    const auto at =
        std::find_if(s.levels.begin(), s.levels.end(), [&](const auto& l) { return l.enzyme == pw.enzyme; });
    if (at == s.levels.end()) continue;
    const auto k = static_cast<std::size_t>(at - s.levels.begin());
    const auto named = std::find(s.wells.begin(), s.wells.end(), pw.well);
    const auto at_w = static_cast<std::size_t>(named - s.wells.begin());
    const double offset = at_w < s.intercepts.size() ? s.intercepts[at_w] : pw.p.front();
    for (std::size_t i = 0; i < pw.p.size(); ++i) {
      us[k].push_back(pw.enzyme * (pw.t_s[i] + g.lead_s) / 60);
      ps[k].push_back(pw.p[i] - offset);
      u_hi = std::max(u_hi, us[k].back());
    }
  }
  double p_lo = INFINITY, p_hi = -INFINITY;
  for (const auto& v : ps)
    for (double p : v) p_lo = std::min(p_lo, p), p_hi = std::max(p_hi, p);
  if (!std::isfinite(p_lo)) p_lo = 0, p_hi = 1;
  svg::Document d(440, 260);
  svg::Chart c(d, {58, 12, 360, 196}, svg::nice_ticks(0, u_hi, 6), svg::nice_ticks(p_lo, p_hi, 5));
  if (std::isfinite(s.u_common)) c.vband(0, s.u_common, "window-ext");
  c.axes("[E]·t (enzyme unit × min)", "product − intercept (" + display_unit(t.conc_unit) + ")");
  for (std::size_t k = 0; k < s.levels.size(); ++k) {
    c.markers(us[k], ps[k], svg::series_marker(k), 2.4, "pt", {{"stroke", svg::series_colour(k)}});
    const double y = 200 - 14 * static_cast<double>(s.levels.size() - k);  // bottom right
    d.markers({{350, y - 3.5}}, svg::series_marker(k), 3.2, "legend-pt", {{"stroke", svg::series_colour(k)}});
    d.text(358, y, "E = " + human(s.levels[k].enzyme), "key");
  }
  const std::string label = fmt::format("product against enzyme × time at S0 = {}", human(s.s0));
  return "<figure class=\"chart\">" + d.str({{"role", "img"}, {"aria-label", label}}) +
         "<figcaption>S0 = " + svg::escape(human(s.s0) + " " + display_unit(t.conc_unit)) +
         ": product made (less each well's intercept) against [E]·t, one colour per enzyme amount; a stable "
         "enzyme's curves lie on one another. Shaded: the [E]·t every level reaches, where the test compares "
         "them.</figcaption></figure>\n";
}

}  // namespace vzero::detail::report
