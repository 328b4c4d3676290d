// The campaign section's words and table: the controls' drift over the run and one row per
// plate (report_campaign.hpp).
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "core/stats.hpp"
#include "report/report_campaign.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

using svg::escape;
using svg::human;

std::string campaign_trend(const Campaign& c, const std::vector<double>& xs, bool full) {
  const char* name = full ? "full-activity" : "no-activity";
  std::vector<double> x, y;
  for (std::size_t k = 0; k < c.plates.size(); ++k) {
    const double mean = (full ? c.plates[k].controls.full : c.plates[k].controls.none).mean;
    if (std::isfinite(mean) && std::isfinite(xs[k])) x.push_back(xs[k]), y.push_back(mean);
  }
  const LineFit f = least_squares_line(x.data(), y.data(), static_cast<int>(x.size()));
  if (!std::isfinite(f.slope)) return fmt::format("{} mean: too few plates with a mean rate for a trend.", name);
  double average = 0;
  for (double v : y) average += v;
  average /= static_cast<double>(y.size());
  const double first = *std::min_element(x.begin(), x.end()), last = *std::max_element(x.begin(), x.end());
  const double to_pct = average != 0 ? 100 * (last - first) / std::fabs(average) : NAN;
  std::string text = fmt::format(
      "{} mean: least-squares change from the first plate to the last {} {} ({} % of its "
      "average {})",
      name, human(f.slope * (last - first), 3), display_unit(c.v0_unit), human(f.slope * to_pct, 3), human(average, 4));
  if (!std::isfinite(f.ci_low)) return text + "; too few plates for an interval.";
  text += fmt::format(", 95 % interval {} to {} %", human(f.ci_low * to_pct, 3), human(f.ci_high * to_pct, 3));
  const bool drift = f.ci_low > 0 || f.ci_high < 0;
  return text + (drift ? ": <span class=\"warn\">a drift (the interval excludes no change)</span>."
                       : ": no drift shown (the interval includes no change).");
}

namespace {

std::string control_cell(const ControlStats& s) {
  if (s.n == 0) return "\u2013";
  std::string t = human(s.mean, 4);
  if (std::isfinite(s.sd)) t += " \u00b1 " + human(s.sd, 2);
  t += fmt::format(" (n {}", s.n);
  if (s.n_flagged > 0) t += fmt::format(", {} left out", s.n_flagged);
  return t + ")";
}

std::string verdict_cell(const CampaignPlate& p, double min_z) {
  if (!std::isfinite(min_z)) return "not judged";
  switch (p.quality.verdict) {
    case QualityVerdict::pass:
      return "pass";
    case QualityVerdict::below:
      return "<span class=\"warn\">below-threshold</span>";
    case QualityVerdict::undetermined:
      break;
  }
  return "undetermined";
}

}  // namespace

std::string campaign_table(const Campaign& c) {
  const bool times = c.by_time() || !c.time_note.empty();
  const bool hits = std::isfinite(c.hit_threshold_pct);
  std::string h =
      "<div class=\"scroll\"><table class=\"campaign\"><thead><tr><th class=\"num\">plate</th>"
      "<th>export</th>";
  if (times) h += "<th>read time</th>";
  h += "<th>full-activity v0 (" + display_unit(c.v0_unit) + ")</th><th>no-activity v0 (" + display_unit(c.v0_unit) +
       ")</th><th class=\"num\">S/B</th><th class=\"num\">Z\u2032</th><th class=\"num\">robust Z\u2032</th>"
       "<th>quality</th>";
  if (hits) h += "<th class=\"num\">hits / called</th><th class=\"num\">hit rate</th>";
  h += "</tr></thead><tbody>";
  for (std::size_t k = 0; k < c.plates.size(); ++k) {
    const auto& p = c.plates[k];
    h += fmt::format("<tr data-plate=\"{}\"><td class=\"num\">{}</td><td><a href=\"#{}\">{}</a></td>", p.plate->id,
                     k + 1, p.plate->id, escape(p.plate->source));
    if (times) h += "<td>" + (p.read_time.empty() ? std::string("\u2013") : escape(p.read_time)) + "</td>";
    h += "<td>" + control_cell(p.controls.full) + "</td><td>" + control_cell(p.controls.none) + "</td>";
    h += "<td class=\"num\">" + human(p.quality.signal_to_background, 3) + "</td><td class=\"num\">" +
         human(p.quality.z_prime, 3) + "</td><td class=\"num\">" + human(p.quality.robust_z_prime, 3) + "</td><td>" +
         verdict_cell(p, c.min_z_prime) + "</td>";
    if (hits)
      h += fmt::format("<td class=\"num\">{} / {}</td><td class=\"num\">{}</td>", p.hits, p.called,
                       p.called > 0 ? human(p.hit_rate_pct(), 3) + " %" : std::string("\u2013"));
    h += "</tr>";
  }
  return h + "</tbody></table></div>\n";
}

}  // namespace vzero::detail::report
