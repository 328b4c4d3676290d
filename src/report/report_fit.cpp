// The kinetics section of the report (fits from fit.json) and the standard curves.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <filesystem>
#include <set>

#include "core/text.hpp"
#include "report/report_model.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

namespace {

using nlohmann::json;
using svg::escape;
using svg::human;

double num_of(const json& j, const char* key) {
  if (!j.is_object() || !j.contains(key) || !j[key].is_number()) return NAN;
  return j[key].get<double>();
}

std::string str_of(const json& j, const char* key) {
  if (!j.is_object() || !j.contains(key) || !j[key].is_string()) return {};
  return j[key].get<std::string>();
}

struct Obs {
  double s = NAN, inhibitor = NAN, v = NAN;
};

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

// Okabe–Ito colours in the order used for inhibitor levels, and a shape per level so
// that the levels differ in more than colour.
const char* level_colour(std::size_t k) {
  static const char* order[] = {"#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000"};
  return order[k % 7];
}
svg::Marker level_marker(std::size_t k) {
  static const svg::Marker order[] = {svg::Marker::circle,   svg::Marker::square, svg::Marker::diamond,
                                      svg::Marker::triangle, svg::Marker::plus,   svg::Marker::cross};
  return order[k % 6];
}

// Points of one fit: from the diagnostics table when given, else the rows of the fitted
// table (rates or summary, matched by file name) at the fit's source lines.
std::vector<Obs> points_of(const json& fitdoc, const json& f, const ReportInput& in) {
  std::vector<Obs> out;
  std::vector<std::string> groups;
  for (const auto& g : member(fitdoc, "group_columns"))
    if (g.is_string()) groups.push_back(g.get<std::string>());
  const json& gv = member(f, "group");
  if (in.diagnostics) {
    const Table& t = *in.diagnostics;
    const int kind = t.require_column("kind", "give the --diagnostics file vzero fit wrote");
    const int model = t.require_column("model", "give the --diagnostics file vzero fit wrote");
    const int s = t.require_column("s", ""), inh = t.require_column("inhibitor", ""), v = t.require_column("v", "");
    std::vector<int> gc;
    for (const auto& g : groups)
      gc.push_back(t.require_column(g, "the diagnostics and fit.json come from one vzero fit run"));
    for (std::size_t r = 0; r < t.rows.size(); ++r) {
      if (t.rows[r][static_cast<std::size_t>(kind)] != "point") continue;
      if (t.rows[r][static_cast<std::size_t>(model)] != str_of(f, "model")) continue;
      bool match = true;
      for (std::size_t k = 0; k < groups.size(); ++k)
        match = match && t.rows[r][static_cast<std::size_t>(gc[k])] == str_of(gv, groups[k].c_str());
      if (!match) continue;
      out.push_back({t.number(r, s).value_or(NAN), t.number(r, inh).value_or(NAN), t.number(r, v).value_or(NAN)});
    }
    return out;
  }
  namespace fs = std::filesystem;
  const std::string name = fs::path(str_of(fitdoc, "source")).filename().string();
  const Table* t = nullptr;
  if (!name.empty() && fs::path(in.rates.source).filename().string() == name)
    t = &in.rates;
  else if (in.summary && !name.empty() && fs::path(in.summary->source).filename().string() == name)
    t = &*in.summary;
  if (!t || !member(f, "source_lines").is_array()) return out;
  const int x = t->column(str_of(fitdoc, "x_column")), y = t->column(str_of(fitdoc, "y_column"));
  const int inh = t->column(str_of(fitdoc, "inhibitor_column"));
  if (x < 0 || y < 0) return out;
  for (const auto& l : member(f, "source_lines")) {
    if (!l.is_number_integer()) continue;
    const int line = l.get<int>();
    auto it = std::lower_bound(t->line_of_row.begin(), t->line_of_row.end(), line);
    if (it == t->line_of_row.end() || *it != line) continue;
    const std::size_t r = static_cast<std::size_t>(it - t->line_of_row.begin());
    out.push_back({t->number(r, x).value_or(NAN), inh >= 0 ? t->number(r, inh).value_or(NAN) : NAN,
                   t->number(r, y).value_or(NAN)});
  }
  return out;
}

struct FitCurve {
  const vzero::KineticModel* model = nullptr;
  std::vector<double> params;
  Eigen::MatrixXd cov;
  double t = NAN;
  double rate(double s, double i) const { return model->rate(params, s, i, {}); }
  // Half-width of the pointwise band: t·√(gᵀ C g).
  double half_width(double s, double i) const {
    if (cov.rows() != static_cast<Eigen::Index>(params.size()) || !std::isfinite(t)) return NAN;
    std::vector<double> g(params.size());
    model->rate(params, s, i, g);
    Eigen::Map<const Eigen::VectorXd> gv(g.data(), static_cast<Eigen::Index>(g.size()));
    double var = gv.dot(cov * gv);
    return var >= 0 ? t * std::sqrt(var) : NAN;
  }
};

std::string level_label(const std::string& column, double level, const std::string& unit) {
  return fmt::format("{} = {}{}", column.empty() ? "I" : column, human(level), unit.empty() ? "" : " " + unit);
}

void legend(svg::Document& d, const std::vector<double>& levels, const svg::Box& a, const std::string& column,
            const std::string& unit) {
  if (levels.size() < 2) return;
  for (std::size_t k = 0; k < levels.size(); ++k) {
    const double y = a.y + 12 + 14 * static_cast<double>(k);
    d.markers({{a.x + 12, y - 3.5}}, level_marker(k), 3.2, "legend-pt", {{"stroke", level_colour(k)}});
    d.text(a.x + 20, y, level_label(column, levels[k], unit), "key");
  }
}

// The unit of a parameter: as fit.json gives it, else the substrate's for the constants
// whose unit role is the substrate's (Km, K_half, Ki of substrate inhibition).
std::string unit_of(const json& p, const vzero::KineticModel* model, const std::string& x_unit) {
  std::string u = display_unit(str_of(p, "unit"));
  const std::string name = str_of(p, "name");
  if (u.empty() && model)
    for (const auto& q : model->parameters)
      if (q.name == name && q.unit_role == vzero::UnitRole::substrate) u = x_unit;
  return u;
}

std::string parameter_table(const json& f, const std::string& x_unit) {
  const vzero::KineticModel* model = vzero::find_model(str_of(f, "model"));
  std::string h =
      "<table class=\"params\"><thead><tr><th>parameter</th><th class=\"num\">estimate</th><th "
      "class=\"num\">SE</th><th class=\"num\">95 % interval (Wald t)</th><th class=\"num\">95 % interval "
      "(profile t)</th><th>unit</th></tr></thead><tbody>";
  auto rows = [&](const json& list) {
    if (!list.is_array()) return;
    for (const auto& p : list) {
      auto pair = [&](const char* key) {
        if (!p.contains(key) || !p[key].is_array() || p[key].size() != 2) return std::string("\u2013");
        auto v = [&](std::size_t k) { return p[key][k].is_number() ? p[key][k].get<double>() : NAN; };
        return human(v(0)) + " \u2013 " + human(v(1));
      };
      h += fmt::format(
          "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>"
          "<td class=\"num\">{}</td><td>{}</td></tr>",
          escape(str_of(p, "name")), human(num_of(p, "estimate")), human(num_of(p, "se"), 3), pair("wald"),
          pair("profile"), escape(unit_of(p, model, x_unit)));
    }
  };
  rows(member(f, "parameters"));
  rows(member(f, "derived"));
  return h + "</tbody></table>\n";
}

std::string fit_figures(const json& doc, const json& f, const ReportInput& in, const std::string& x_unit) {
  FitCurve fc;
  fc.model = vzero::find_model(str_of(f, "model"));
  if (!fc.model) return "<p class=\"note\">unknown model " + escape(str_of(f, "model")) + "</p>";
  for (const auto& p : member(f, "parameters")) fc.params.push_back(num_of(p, "estimate"));
  if (fc.params.size() != fc.model->parameters.size()) return "<p class=\"note\">the fit lists no parameters</p>";
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
  const bool inhibition = fc.model->needs_inhibitor();
  const std::vector<Obs> pts = points_of(doc, f, in);
  const std::vector<double> levels = levels_of(pts, inhibition);
  const json& units = member(doc, "units");
  const std::string v_unit = display_unit(str_of(units, "v")), i_unit = display_unit(str_of(units, "inhibitor"));
  const std::string icol = str_of(doc, "inhibitor_column");
  const std::string xu = x_unit.empty() ? "unit not given" : x_unit, vu = v_unit.empty() ? "unit not given" : v_unit;

  double s_max = 0, v_max = 0;
  for (const auto& p : pts)
    if (std::isfinite(p.s) && std::isfinite(p.v)) s_max = std::max(s_max, p.s), v_max = std::max(v_max, p.v);
  if (s_max <= 0) s_max = 4 * std::max(fc.params.size() > 1 ? fc.params[1] : 1.0, 1e-12);
  const svg::Ticks tx = svg::nice_ticks(0, s_max * 1.04, 6);
  // Curves and band over the axis.
  const int k_samples = 161;
  std::vector<double> xs(k_samples);
  for (int k = 0; k < k_samples; ++k) xs[static_cast<std::size_t>(k)] = tx.hi * k / (k_samples - 1);
  std::vector<std::vector<double>> mid(levels.size()), lo(levels.size()), hi(levels.size());
  for (std::size_t l = 0; l < levels.size(); ++l)
    for (double s : xs) {
      const double v = fc.rate(s, levels[l]), h = fc.half_width(s, levels[l]);
      mid[l].push_back(v), lo[l].push_back(v - h), hi[l].push_back(v + h);
      v_max = std::max({v_max, v, std::isfinite(h) ? v + h : v});
    }
  std::string out = "<div class=\"fit-figures\">";

  // v against S.
  {
    svg::Document d(480, 330);
    svg::Chart c(d, {70, 12, 390, 262}, tx, svg::nice_ticks(0, v_max * 1.04, 6));
    c.axes("substrate S (" + xu + ")", "v (" + vu + ")");
    for (std::size_t l = 0; l < levels.size(); ++l) c.band(xs, lo[l], hi[l], "ci-band", {{"fill", level_colour(l)}});
    for (std::size_t l = 0; l < levels.size(); ++l) c.polyline(xs, mid[l], "fit-curve", {{"stroke", level_colour(l)}});
    for (std::size_t l = 0; l < levels.size(); ++l) {
      std::vector<double> sx, vy;
      for (const auto& p : pts)
        if (level_index(levels, inhibition ? p.inhibitor : 0.0) == l) sx.push_back(p.s), vy.push_back(p.v);
      c.markers(sx, vy, level_marker(l), 3, "pt", {{"stroke", level_colour(l)}});
    }
    legend(d, levels,
           {c.x(tx.values.back()) - 150, c.area().y + c.area().height - 18 - 14.0 * static_cast<double>(levels.size()),
            150, 0},
           icol, i_unit);
    out += "<figure class=\"chart\">" +
           d.str({{"width", "480"}, {"role", "img"}, {"aria-label", "rate against substrate"}}) +
           "<figcaption>Rates against substrate with the fitted curve" + (levels.size() > 1 ? "s" : std::string()) +
           " and the pointwise 95 % confidence band of the curve (delta method from the fit's covariance).</figcaption>"
           "</figure>";
  }
  // Residuals.
  {
    std::vector<double> res;
    double r_max = 0;
    for (const auto& p : pts) {
      double r = p.v - fc.rate(p.s, inhibition ? p.inhibitor : 0.0);
      res.push_back(r);
      if (std::isfinite(r)) r_max = std::max(r_max, std::fabs(r));
    }
    if (r_max == 0) r_max = 1;
    svg::Document d(480, 236);
    svg::Chart c(d, {70, 12, 390, 168}, tx, svg::nice_ticks(-r_max * 1.05, r_max * 1.05, 5));
    c.axes("substrate S (" + xu + ")", "v \u2212 v\u0302 (" + vu + ")");
    c.hline(0, "zero");
    for (std::size_t l = 0; l < levels.size(); ++l) {
      std::vector<double> sx, ry;
      for (std::size_t k = 0; k < pts.size(); ++k)
        if (level_index(levels, inhibition ? pts[k].inhibitor : 0.0) == l) sx.push_back(pts[k].s), ry.push_back(res[k]);
      c.markers(sx, ry, level_marker(l), 3, "pt", {{"stroke", level_colour(l)}});
    }
    out += "<figure class=\"chart\">" + d.str({{"width", "480"}, {"role", "img"}, {"aria-label", "residuals"}}) +
           "<figcaption>Residuals: observed minus fitted rate. A trend with S says the model misses "
           "something.</figcaption></figure>";
  }
  // Double reciprocal, as a diagnostic.
  {
    std::vector<double> ux, uy;
    double u_max = 0, w_max = 0;
    for (const auto& p : pts)
      if (p.s > 0 && p.v > 0) {
        u_max = std::max(u_max, 1 / p.s);
        w_max = std::max(w_max, 1 / p.v);
      }
    if (u_max <= 0) u_max = 1 / std::max(tx.values.size() > 1 ? tx.values[1] : 1.0, 1e-12);
    const bool finite_limit = fc.model->saturates;
    std::vector<double> grid;
    const double u0 = finite_limit ? 0 : u_max / 40;
    for (int k = 0; k <= 80; ++k) grid.push_back(u0 + (u_max * 1.04 - u0) * k / 80);
    std::vector<std::vector<double>> inv(levels.size());
    for (std::size_t l = 0; l < levels.size(); ++l)
      for (double u : grid) {
        // u = 0 is S → ∞: a substrate far beyond the data stands in for the limit.
        const double s = u > 0 ? 1 / u : 1e9 * std::max(s_max, 1e-300);
        const double v = fc.rate(s, levels[l]);
        inv[l].push_back(v > 0 ? 1 / v : NAN);
        if (v > 0) w_max = std::max(w_max, 1 / v);
      }
    svg::Document d(480, 330);
    svg::Chart c(d, {70, 12, 390, 262}, svg::nice_ticks(0, u_max * 1.04, 6), svg::nice_ticks(0, w_max * 1.04, 6));
    const std::string stem = per_min_stem(str_of(units, "v"));
    c.axes("1/S (1/" + xu + ")", "1/v (" + (stem.empty() ? "1/(" + vu + ")" : "min/" + display_unit(stem)) + ")");
    for (std::size_t l = 0; l < levels.size(); ++l)
      c.polyline(grid, inv[l], "fit-curve", {{"stroke", level_colour(l)}});
    for (std::size_t l = 0; l < levels.size(); ++l) {
      std::vector<double> a, b;
      for (const auto& p : pts)
        if (p.s > 0 && p.v > 0 && level_index(levels, inhibition ? p.inhibitor : 0.0) == l)
          a.push_back(1 / p.s), b.push_back(1 / p.v);
      c.markers(a, b, level_marker(l), 3, "pt", {{"stroke", level_colour(l)}});
    }
    legend(d, levels, {c.area().x, c.area().y, 150, 0}, icol, i_unit);
    out += "<figure class=\"chart\">" +
           d.str({{"width", "480"}, {"role", "img"}, {"aria-label", "double-reciprocal diagnostic"}}) +
           "<figcaption>Double-reciprocal (Lineweaver\u2013Burk) plot, a diagnostic only: the lines are the "
           "nonlinear estimate redrawn in these coordinates, not a straight-line fit.</figcaption></figure>";
  }
  out += "</div>\n";
  if (pts.empty())
    out +=
        "<p class=\"note\">No observed points: pass the --diagnostics file of the fit (or the table it fitted) "
        "to draw them.</p>\n";
  return out;
}

}  // namespace

std::string render_fits(const PageData& m, const ReportInput& in) {
  const json& doc = m.fit;
  if (!doc.is_object()) return {};
  if (!member(doc, "fits").is_array())
    throw InputError(Where{in.fit_source}, "expected a \"fits\" list", {"give the --json file vzero fit wrote"});
  const json& units = member(doc, "units");
  std::string x_unit = display_unit(str_of(units, "x"));
  if (x_unit.empty() && m.package.is_object() && detail::iequals(str_of(doc, "x_column"), "substrate")) {
    // The plate map's substrate is in --conc-unit (vzero rates --help).
    x_unit = display_unit(str_of(member(member(m.package, "vzero"), "options"), "conc-unit"));
  }
  std::string h = "<section id=\"fits\">\n<h2>Kinetics fit</h2>\n";
  const json& rows = member(doc, "rows");
  h += fmt::format(
      "<p class=\"lede\">From {} (vzero fit {}): x = {}, y = {}{}; weighting {}; {} of {} rows used.</p>\n",
      escape(str_of(doc, "source")), escape(str_of(doc, "version")), escape(str_of(doc, "x_column")),
      escape(str_of(doc, "y_column")),
      str_of(doc, "inhibitor_column").empty() ? "" : ", inhibitor = " + escape(str_of(doc, "inhibitor_column")),
      escape(str_of(doc, "weighting")), human(num_of(rows, "used")), human(num_of(rows, "read")));
  if (member(doc, "notes").is_array() && !member(doc, "notes").empty()) {
    h += "<ul class=\"notes\">";
    for (const auto& n : member(doc, "notes"))
      if (n.is_string()) h += "<li>" + escape(n.get<std::string>()) + "</li>";
    h += "</ul>\n";
  }
  for (const auto& f : member(doc, "fits")) {
    std::string group;
    for (const auto& [k, v] : member(f, "group").items())
      group += (group.empty() ? "" : ", ") + k + " = " + (v.is_string() ? v.get<std::string>() : v.dump());
    h += fmt::format("<article class=\"fit\"><h3>{}{}</h3>\n<p class=\"formula\">{}</p>\n", escape(str_of(f, "model")),
                     group.empty() ? "" : " \u00b7 " + escape(group), escape(str_of(f, "formula")));
    if (!member(f, "ok").is_boolean() || !member(f, "ok").get<bool>()) {
      h += "<p class=\"warn\">No fit: " + escape(str_of(f, "message")) + "</p></article>\n";
      continue;
    }
    h += fmt::format(
        "<p class=\"stats\">n = {}, df = {}, residual SD = {}, AIC = {}, {} in {} iterations (start: "
        "{}).</p>\n",
        human(num_of(f, "n")), human(num_of(f, "df")), human(num_of(f, "residual_sd"), 3), human(num_of(f, "aic"), 5),
        member(f, "converged") == true ? "converged" : "not converged", human(num_of(f, "iterations")),
        escape(str_of(f, "start_method")));
    h += parameter_table(f, x_unit);
    for (const auto& w : member(f, "warnings"))
      if (w.is_string()) h += "<p class=\"warn\">" + escape(w.get<std::string>()) + "</p>\n";
    h += fit_figures(doc, f, in, x_unit);
    h += "</article>\n";
  }
  return h + "</section>\n";
}

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
    // Points: each standard well's mean signal over its ok reads (or the read the options name).
    int read = -1;
    const json& opts = member(member(m.package, "vzero"), "options");
    if (std::string r = str_of(opts, "standard-read"); !r.empty() && r != "mean") read = std::atoi(r.c_str()) - 1;
    std::vector<double> xs, ys;
    if (p)
      for (const auto& w : p->wells) {
        if (w.role != "standard") continue;
        double conc = NAN;
        for (const auto& [k, v] : w.map_values)
          if (detail::iequals(k, "standard_conc")) conc = parse_number(v).value_or(NAN);
        double sum = 0;
        int n = 0;
        for (std::size_t i = 0; i < w.raw.size(); ++i)
          if (w.status[i] == "ok" && std::isfinite(w.raw[i]) && (read < 0 || static_cast<int>(i) == read))
            sum += w.raw[i], ++n;
        if (n > 0 && std::isfinite(conc)) xs.push_back(conc), ys.push_back(sum / n);
      }
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
        "class=\"chart\">{}<figcaption>Standard wells (points: mean signal per well{}) and the fitted "
        "line; the shaded strip runs up to the limit of detection.</figcaption></figure>",
        escape(source), escape(channel), d.str({{"width", "480"}, {"role", "img"}, {"aria-label", "standard curve"}}),
        xs.empty() ? "; none drawn without the traces table" : "");
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
