// The report's standard-curve section: each channel that used a standard curve, drawn
// from what datapackage.json records (points, line, limit of detection).
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "report/report_fit.hpp"
#include "report/report_model.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

using svg::escape;
using svg::human;

std::string render_standard_curves(const PageData& m) {
  if (!m.package.is_object()) return {};
  const json& channels = member(member(m.package, "vzero"), "channels");
  if (!channels.is_array()) return {};
  std::string h;
  for (const auto& ch : channels) {
    const json& sc = member(ch, "standard_curve");
    if (!sc.is_object()) continue;
    const std::string source = str_of(ch, "source"), channel = str_of(ch, "channel");
    const PlateView* p = m.plate(source, channel);
    const std::string conc_unit = display_unit(per_min_stem(str_of(ch, "v0_unit")));
    const std::string sig_unit = p && !p->signal_unit.empty() ? p->signal_unit : "signal units";
    // Points: the (concentration, signal) of each standard the curve used, as recorded.
    std::vector<double> xs, ys;
    for (const auto& pt : member(sc, "points"))
      if (pt.is_array() && pt.size() == 2 && pt[0].is_number() && pt[1].is_number())
        xs.push_back(pt[0].get<double>()), ys.push_back(pt[1].get<double>());
    const double slope = num_of(sc, "slope"), icpt = num_of(sc, "intercept"), lod = num_of(sc, "lod");
    double c_max = std::max(num_of(sc, "conc_max"), 0.0), s_max = std::max(num_of(sc, "signal_max"), 0.0);
    for (std::size_t k = 0; k < xs.size(); ++k) c_max = std::max(c_max, xs[k]), s_max = std::max(s_max, ys[k]);
    const svg::Ticks tx = svg::nice_ticks(0, c_max * 1.04, 6);
    double s_lo = std::min({0.0, icpt, ys.empty() ? 0.0 : *std::min_element(ys.begin(), ys.end())});
    svg::Document d(480, 330);
    svg::Chart c(d, {70, 12, 390, 262}, tx, svg::nice_ticks(s_lo, std::max(s_max, icpt + slope * tx.hi) * 1.02, 6));
    c.axes("standard concentration (" + conc_unit + ")", "signal (" + sig_unit + ")");
    if (std::isfinite(lod) && lod > 0 && lod < tx.hi) c.vband(0, lod, "lod-band");
    c.polyline({0, tx.hi}, {icpt, icpt + slope * tx.hi}, "fit-curve", {{"stroke", "#0072B2"}});
    c.markers(xs, ys, svg::Marker::circle, 3, "pt", {{"stroke", "#000000"}});
    h += fmt::format(
        "<article class=\"standard\"><h3>{} \u00b7 {}</h3>\n<div class=\"fit-figures\"><figure "
        "class=\"chart\">{}<figcaption>The standards the curve was fitted to (points, as datapackage.json "
        "records them{}) and the fitted line; the shaded strip runs up to the limit of "
        "detection.</figcaption></figure>",
        escape(source), escape(channel), d.str({{"width", "480"}, {"role", "img"}, {"aria-label", "standard curve"}}),
        xs.empty() ? "; none recorded" : "");
    h += fmt::format(
        "<table class=\"params\"><tbody><tr><td>signal</td><td>= {} + {} \u00b7 c</td></tr><tr><td>slope "
        "SE</td><td>{}</td></tr><tr><td>intercept SE</td><td>{}</td></tr><tr><td>R\u00b2</td><td>{}</td></"
        "tr><tr><td>residual SD</td><td>{}</td></tr><tr><td>limit of detection</td><td>{} {} ({})</td></"
        "tr><tr><td>calibrated range</td><td>{} \u2013 {} {}</td></tr><tr><td>standards</td><td>{}</td></"
        "tr></tbody></table></div></article>\n",
        human(icpt), human(slope), human(num_of(sc, "slope_se"), 3), human(num_of(sc, "intercept_se"), 3),
        human(num_of(sc, "r2"), 5), human(num_of(sc, "residual_sd"), 3), human(lod, 3), conc_unit,
        escape(str_of(sc, "lod_basis")), human(num_of(sc, "conc_min")), human(num_of(sc, "conc_max")), conc_unit,
        human(num_of(sc, "n")));
  }
  if (h.empty()) return {};
  return "<section id=\"standards\">\n<h2>Standard curve</h2>\n" + h + "</section>\n";
}

}  // namespace vzero::detail::report
