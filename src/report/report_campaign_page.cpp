// The campaign section's HTML: three small charts across the plates (Z′ with the threshold,
// hit rate, the controls' mean rates) and a table, one set per channel (report_campaign.hpp).
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "report/report_campaign.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

namespace {

using svg::escape;
using svg::human;

constexpr const char* k_blue = "#0072B2";        // Okabe & Ito: pass, full-activity
constexpr const char* k_vermillion = "#D55E00";  // below threshold, no-activity
constexpr const char* k_grey = "#777777";        // undetermined
constexpr double k_z_floor = -2;                 // Z′ below this is drawn on the axis floor, labelled

std::string x_title(const Campaign& c) {
  return c.by_time() ? "hours since the first plate (" + c.time_key + ")" : "plate (file order)";
}

// The x axis: ticks over the plates' places, the range widened a little beyond them so that no
// point or bar sits on the frame.
svg::Ticks x_ticks(const Campaign& c, const std::vector<double>& xs) {
  const auto [lo, hi] = std::minmax_element(xs.begin(), xs.end());
  svg::Ticks t;
  double pad = 0.5;
  if (c.by_time()) {
    t = svg::nice_ticks(*lo, *hi, 6);
    pad = 0.06 * std::max(*hi - *lo, 1.0);
  } else {
    const int n = static_cast<int>(xs.size());
    t = svg::nice_ticks(1, n, std::min(n, 8));
    if (t.step < 1) {  // whole plate numbers only
      t.values.clear();
      for (int k = 1; k <= n; ++k) t.values.push_back(k);
      t.step = 1, t.decimals = 0;
    }
  }
  t.lo = std::min(t.lo, *lo - pad);
  t.hi = std::max(t.hi, *hi + pad);
  return t;
}

std::string plate_label(const CampaignPlate& p, std::size_t k) {
  return fmt::format("plate {}: {}", k + 1, p.plate->source);
}

const char* verdict_colour(QualityVerdict v) {
  return v == QualityVerdict::pass ? k_blue : v == QualityVerdict::below ? k_vermillion : k_grey;
}

std::string figure(const svg::Document& d, const std::string& label, const std::string& caption) {
  return "<figure class=\"chart\">" + d.str({{"width", "470"}, {"role", "img"}, {"aria-label", label}}) +
         "<figcaption>" + caption + "</figcaption></figure>";
}

std::string z_chart(const Campaign& c, const std::vector<double>& xs) {
  double lo = std::isfinite(c.min_z_prime) ? std::min(0.0, c.min_z_prime) : 0.0;
  for (const auto& p : c.plates)
    if (std::isfinite(p.quality.z_prime)) lo = std::min(lo, p.quality.z_prime);
  lo = std::max(lo, k_z_floor);
  svg::Document d(470, 215);
  svg::Chart ch(d, {52, 10, 400, 160}, x_ticks(c, xs), svg::nice_ticks(lo, 1, 5));
  ch.axes(x_title(c), "Z\u2032");
  if (std::isfinite(c.min_z_prime)) {
    ch.hline(c.min_z_prime, "zero");
    d.text(ch.area().x + ch.area().width - 4, ch.y(c.min_z_prime) - 4, "threshold " + human(c.min_z_prime, 3), "key",
           "end");
  }
  for (std::size_t k = 0; k < c.plates.size(); ++k) {
    const auto& p = c.plates[k];
    const double z = p.quality.z_prime;
    if (!std::isfinite(z)) continue;
    const bool floor = z < ch.y_ticks().lo;
    d.open_group("campaign-pt", {{"data-plate", p.plate->id}, {"data-z-prime", svg::num(z, 6)}});
    d.title(fmt::format("{}: Z\u2032 = {} ({})", plate_label(p, k), human(z, 4), to_string(p.quality.verdict)));
    ch.markers({xs[k]}, {floor ? ch.y_ticks().lo : z}, floor ? svg::Marker::triangle : svg::Marker::circle, 4, "pt",
               {{"stroke", verdict_colour(p.quality.verdict)}});
    if (floor) d.text(ch.x(xs[k]) + 6, ch.y(ch.y_ticks().lo) - 4, human(z, 3), "key");
    if (c.plates.size() <= 24)  // numbered while the labels fit
      d.text(ch.x(xs[k]), ch.y(floor ? ch.y_ticks().lo : z) - 7, std::to_string(k + 1), "key", "middle");
    d.close_group();
  }
  return figure(d, "Z' per plate",
                "Z\u2032 per plate from its unflagged control wells (Zhang, Chung &amp; Oldenburg 1999); blue: at or "
                "above the threshold (dashed), vermillion: below it; a triangle on the floor: below " +
                    human(k_z_floor) + ", value written beside it.");
}

std::string hit_chart(const Campaign& c, const std::vector<double>& xs) {
  double hi = 1;
  for (const auto& p : c.plates)
    if (std::isfinite(p.hit_rate_pct())) hi = std::max(hi, p.hit_rate_pct());
  svg::Document d(470, 215);
  const svg::Ticks tx = x_ticks(c, xs);
  svg::Chart ch(d, {52, 10, 400, 160}, tx, svg::nice_ticks(0, hi, 5));
  ch.axes(x_title(c), "hit rate (%)");
  const double span = ch.x(tx.hi) - ch.x(tx.lo);
  const double width = std::clamp(0.6 * span / static_cast<double>(c.plates.size() + 1), 2.0, 24.0);
  for (std::size_t k = 0; k < c.plates.size(); ++k) {
    const auto& p = c.plates[k];
    const double r = p.hit_rate_pct();
    if (!std::isfinite(r)) continue;
    d.open_group("campaign-bar", {{"data-plate", p.plate->id},
                                  {"data-hits", std::to_string(p.hits)},
                                  {"data-called", std::to_string(p.called)}});
    d.title(fmt::format("{}: {} hits of {} samples called ({} %)", plate_label(p, k), p.hits, p.called, human(r, 3)));
    d.rect(ch.x(xs[k]) - width / 2, ch.y(r), width, ch.y(0) - ch.y(r), "bar-step",
           {{"fill", verdict_colour(p.quality.verdict)}});
    d.close_group();
  }
  return figure(d, "hit rate per plate",
                fmt::format("Share of each plate's unflagged samples with inhibition at or above {} % (the hit "
                            "threshold); bars coloured by the plate's Z\u2032 verdict as on the left.",
                            human(c.hit_threshold_pct, 4)));
}

// Mean ± sd of one control per plate, joined in plate order.
void control_series(svg::Document& d, svg::Chart& ch, const Campaign& c, const std::vector<double>& xs, bool full) {
  const char* colour = full ? k_blue : k_vermillion;
  std::vector<double> ys;
  for (std::size_t k = 0; k < c.plates.size(); ++k) {
    const ControlStats& s = full ? c.plates[k].controls.full : c.plates[k].controls.none;
    ys.push_back(s.mean);
    if (std::isfinite(s.sd))
      d.line(ch.x(xs[k]), ch.y(s.mean - s.sd), ch.x(xs[k]), ch.y(s.mean + s.sd), "fit-curve",
             {{"stroke", colour}, {"stroke-width", "1"}});
  }
  ch.polyline(xs, ys, "fit-curve", {{"stroke", colour}, {"stroke-width", "1"}});
  ch.markers(xs, ys, full ? svg::Marker::circle : svg::Marker::square, 3.4, "pt", {{"stroke", colour}});
}

std::string drift_chart(const Campaign& c, const std::vector<double>& xs) {
  double lo = INFINITY, hi = -INFINITY;
  for (const auto& p : c.plates)
    for (const ControlStats* s : {&p.controls.full, &p.controls.none}) {
      const double sd = std::isfinite(s->sd) ? s->sd : 0;
      if (std::isfinite(s->mean)) lo = std::min(lo, s->mean - sd), hi = std::max(hi, s->mean + sd);
    }
  svg::Document d(470, 215);
  svg::Chart ch(d, {52, 10, 400, 160}, x_ticks(c, xs), svg::nice_ticks(std::min(lo, 0.0), hi, 5));
  ch.axes(x_title(c), "control mean v0 (" + display_unit(c.v0_unit) + ")");
  control_series(d, ch, c, xs, true);
  control_series(d, ch, c, xs, false);
  const auto& a = ch.area();
  d.markers({{a.x + 10, a.y + 9}}, svg::Marker::circle, 3.2, "legend-pt", {{"stroke", k_blue}});
  d.text(a.x + 18, a.y + 12.5, "full-activity", "key");
  d.markers({{a.x + 90, a.y + 9}}, svg::Marker::square, 3.2, "legend-pt", {{"stroke", k_vermillion}});
  d.text(a.x + 98, a.y + 12.5, "no-activity", "key");
  return figure(d, "control rates per plate",
                "Mean v0 of each plate's unflagged full-activity (circles) and no-activity (squares) wells, "
                "\u00b1 one sample standard deviation: drift over the run shows as a slope.");
}

}  // namespace

std::string render_campaign(const std::vector<Campaign>& campaigns) {
  if (campaigns.empty()) return {};
  std::string h = "<section id=\"campaign\">\n<h2>Campaign</h2>\n";
  for (const auto& c : campaigns) {
    const auto xs = xs_of(c);
    if (campaigns.size() > 1) h += "<h3>Channel " + escape(c.channel) + "</h3>\n";
    std::vector<std::string> below;
    for (std::size_t k = 0; k < c.plates.size(); ++k)
      if (c.plates[k].quality.verdict == QualityVerdict::below) below.push_back(std::to_string(k + 1));
    std::string lede = fmt::format(
        "{} plates of channel {} with both controls, {}.", c.plates.size(), escape(c.channel),
        c.by_time() ? "placed by the read time each export records (" + escape(c.time_key) + ")" : "in file order");
    if (!c.time_note.empty()) lede += " File order: " + escape(c.time_note) + ".";
    if (!std::isfinite(c.min_z_prime))
      lede += " No Z\u2032 threshold is recorded in datapackage.json: the plates are not judged.";
    else
      lede += below.empty()
                  ? fmt::format(" Every plate with a Z\u2032 is at or above the threshold {}.", human(c.min_z_prime, 3))
                  : fmt::format(" <span class=\"warn\">Below the Z\u2032 threshold {}: plate{} {}.</span>",
                                human(c.min_z_prime, 3), below.size() == 1 ? "" : "s", fmt::join(below, ", "));
    h += "<p class=\"lede\">" + lede + "</p>\n<div class=\"fit-figures\">";
    h += z_chart(c, xs);
    if (std::isfinite(c.hit_threshold_pct)) h += hit_chart(c, xs);
    if (!c.mixed_units) h += drift_chart(c, xs);
    h += "</div>\n";
    if (!std::isfinite(c.hit_threshold_pct))
      h += "<p class=\"note\">No hit threshold was given (--hit-threshold), so no hit rates.</p>\n";
    if (c.mixed_units)
      h += "<p class=\"note\">The plates' rates are in different units: their control means are not compared.</p>\n";
    else
      h += "<p class=\"stats\">" + campaign_trend(c, xs, true) + "<br/>" + campaign_trend(c, xs, false) + "</p>\n";
    h += campaign_table(c);
  }
  return h + "</section>\n";
}

}  // namespace vzero::detail::report
