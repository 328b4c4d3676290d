// The kinetics section of the report (fits from fit.json) and the standard curves.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <filesystem>
#include <set>

#include "core/text.hpp"
#include "report/report_fit.hpp"
#include "report/report_model.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

double num_of(const json& j, const char* key) {
  if (!j.is_object() || !j.contains(key) || !j[key].is_number()) return NAN;
  return j[key].get<double>();
}

std::string str_of(const json& j, const char* key) {
  if (!j.is_object() || !j.contains(key) || !j[key].is_string()) return {};
  return j[key].get<std::string>();
}

std::string text_of(const json& v) {
  if (v.is_string()) return v.get<std::string>();
  if (v.is_number()) return format_number(v.get<double>());
  return v.is_null() ? std::string() : v.dump();
}

namespace {

using svg::escape;
using svg::human;

// The rows of the fitted table (rates or summary, matched by file name), if the report has it.
const Table* fitted_table(const json& fitdoc, const ReportInput& in) {
  namespace fs = std::filesystem;
  const std::string name = fs::path(str_of(fitdoc, "source")).filename().string();
  if (name.empty()) return nullptr;
  if (fs::path(in.rates.source).filename().string() == name) return &in.rates;
  if (in.summary && fs::path(in.summary->source).filename().string() == name) return &*in.summary;
  return nullptr;
}

// Points of one fit: from the diagnostics table when given, else the rows of the fitted
// table at the fit's source lines; the rows of the same group and role it left out come
// from the fitted table.
Points points_of(const FitView& fv, const json& f, const ReportInput& in) {
  const json& fitdoc = fv.doc;
  Points out;
  std::vector<std::string> groups;
  for (const auto& g : member(fitdoc, "group_columns"))
    if (g.is_string()) groups.push_back(g.get<std::string>());
  const json& gv = member(f, "group");
  if (fv.diagnostics) {
    const Table& t = *fv.diagnostics;
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
        match = match && t.rows[r][static_cast<std::size_t>(gc[k])] == text_of(member(gv, groups[k].c_str()));
      if (!match) continue;
      out.used.push_back({t.number(r, s).value_or(NAN), t.number(r, inh).value_or(NAN), t.number(r, v).value_or(NAN)});
    }
  }
  const Table* t = fitted_table(fitdoc, in);
  if (!t || !member(f, "source_lines").is_array()) return out;
  const int x = t->column(str_of(fitdoc, "x_column")), y = t->column(str_of(fitdoc, "y_column"));
  const int inh = t->column(str_of(fitdoc, "inhibitor_column"));
  const int role = t->column("role");
  const std::string want_role = str_of(member(fitdoc, "options"), "role");
  if (x < 0 || y < 0) return out;
  std::set<int> lines;
  for (const auto& l : member(f, "source_lines"))
    if (l.is_number_integer()) lines.insert(l.get<int>());
  std::vector<int> gc;
  for (const auto& g : groups) gc.push_back(t->column(g));
  for (std::size_t r = 0; r < t->rows.size(); ++r) {
    const Obs o{t->number(r, x).value_or(NAN), inh >= 0 ? t->number(r, inh).value_or(NAN) : NAN,
                t->number(r, y).value_or(NAN)};
    if (lines.count(t->line_of_row[r])) {
      if (!fv.diagnostics) out.used.push_back(o);
      continue;
    }
    bool match = std::isfinite(o.s) && std::isfinite(o.v);
    if (role >= 0 && !want_role.empty()) match = match && t->rows[r][static_cast<std::size_t>(role)] == want_role;
    for (std::size_t k = 0; k < groups.size(); ++k)
      match =
          match && gc[k] >= 0 && t->rows[r][static_cast<std::size_t>(gc[k])] == text_of(member(gv, groups[k].c_str()));
    if (match) out.left_out.push_back(o);
  }
  return out;
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

std::string fit_figures(const FitView& fv, const json& f, const ReportInput& in, const std::string& x_unit) {
  const json& doc = fv.doc;
  FitPlot fp;
  fp.fc = curve_of(f);
  if (!fp.fc.model) return "<p class=\"note\">unknown model " + escape(str_of(f, "model")) + "</p>";
  if (fp.fc.params.size() != fp.fc.model->parameters.size()) return "<p class=\"note\">the fit lists no parameters</p>";
  fp.inhibition = fp.fc.model->needs_inhibitor();
  fp.pts = points_of(fv, f, in);
  fp.levels = levels_of(fp.pts.used, fp.inhibition);
  const json& units = member(doc, "units");
  const std::string v_unit = display_unit(str_of(units, "v"));
  fp.i_unit = display_unit(str_of(units, "inhibitor"));
  fp.icol = str_of(doc, "inhibitor_column");
  fp.v_stem = per_min_stem(str_of(units, "v"));
  fp.xu = x_unit.empty() ? "unit not given" : x_unit;
  fp.vu = v_unit.empty() ? "unit not given" : v_unit;
  for (const auto* list : {&fp.pts.used, &fp.pts.left_out})
    for (const auto& p : *list)
      if (std::isfinite(p.s) && std::isfinite(p.v))
        fp.s_max = std::max(fp.s_max, p.s), fp.v_max = std::max(fp.v_max, p.v);
  if (fp.s_max <= 0) fp.s_max = 4 * std::max(fp.fc.params.size() > 1 ? fp.fc.params[1] : 1.0, 1e-12);
  fp.tx = svg::nice_ticks(0, fp.s_max * 1.04, 6);
  std::string out = "<div class=\"fit-figures\">" + fit_charts(fp);
  out += "</div>\n";
  if (fp.pts.used.empty())
    out += fv.from_table ? "<p class=\"note\">No observed points: a fit table does not say which rows were fitted; "
                           "pass its --diagnostics file to draw them.</p>\n"
                         : "<p class=\"note\">No observed points: pass the --diagnostics file of the fit (or the table "
                           "it fitted) to draw them.</p>\n";
  return out;
}

// The x unit of a fit: as the fit records it; for the plate map's substrate, the run's
// --conc-unit; from a fit table, the unit of a parameter with the substrate's unit role.
std::string x_unit_of(const PageData& m, const FitView& fv) {
  const json& doc = fv.doc;
  std::string x_unit = display_unit(str_of(member(doc, "units"), "x"));
  if (x_unit.empty() && detail::iequals(str_of(doc, "x_column"), "substrate"))
    x_unit = display_unit(str_of(member(member(m.package, "vzero"), "options"), "conc-unit"));
  if (x_unit.empty() && fv.from_table)
    for (const auto& f : member(doc, "fits")) {
      const vzero::KineticModel* model = vzero::find_model(str_of(f, "model"));
      for (const auto& p : member(f, "parameters"))
        for (const auto& q : model ? model->parameters : std::vector<vzero::KineticParameter>{})
          if (q.name == str_of(p, "name") && q.unit_role == vzero::UnitRole::substrate && x_unit.empty())
            x_unit = display_unit(str_of(p, "unit"));
    }
  return x_unit;
}

std::string fit_lede(const FitView& fv) {
  const json& doc = fv.doc;
  if (fv.from_table)
    return fmt::format(
        "<p class=\"lede\">From the fit table {}: estimates and intervals as it gives them. It records neither the "
        "fitted table nor the covariance, so the curves are drawn without a confidence band{}.</p>\n",
        escape(fv.source), fv.diagnostics ? "" : " and without points (give the fit's JSON for both)");
  const json& rows = member(doc, "rows");
  std::string h = fmt::format(
      "<p class=\"lede\">From {} (vzero fit {}, read from {}): x = {}, y = {}{}; weighting {}; {} of {} rows "
      "used.</p>\n",
      escape(str_of(doc, "source")), escape(str_of(doc, "version")), escape(fv.source), escape(str_of(doc, "x_column")),
      escape(str_of(doc, "y_column")),
      str_of(doc, "inhibitor_column").empty() ? "" : ", inhibitor = " + escape(str_of(doc, "inhibitor_column")),
      escape(str_of(doc, "weighting")), human(num_of(rows, "used")), human(num_of(rows, "read")));
  if (member(doc, "notes").is_array() && !member(doc, "notes").empty()) {
    h += "<ul class=\"notes\">";
    for (const auto& n : member(doc, "notes"))
      if (n.is_string()) h += "<li>" + escape(n.get<std::string>()) + "</li>";
    h += "</ul>\n";
  }
  return h;
}

}  // namespace

std::string render_fit(const PageData& m, const FitView& fv, const ReportInput& in) {
  const json& doc = fv.doc;
  if (!member(doc, "fits").is_array())
    throw InputError(Where{fv.source}, "expected a \"fits\" list", {"give the --json file vzero fit wrote"});
  const std::string x_unit = x_unit_of(m, fv);
  std::string h = "<h3>Fit of " + escape(fv.from_table ? fv.source : str_of(doc, "source")) + " (" + escape(fv.source) +
                  ")</h3>\n" + fit_lede(fv);
  for (const auto& f : member(doc, "fits")) {
    std::string group;
    for (const auto& [k, v] : member(f, "group").items()) group += (group.empty() ? "" : ", ") + k + " = " + text_of(v);
    h += fmt::format("<article class=\"fit\"><h4>{}{}</h4>\n<p class=\"formula\">{}</p>\n", escape(str_of(f, "model")),
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
    h += fit_figures(fv, f, in, x_unit);
    h += "</article>\n";
  }
  return h;
}

std::string render_fits(const PageData& m, const ReportInput& in) {
  if (m.fits.empty()) return {};
  std::string h = "<section id=\"fits\">\n<h2>Kinetics fit</h2>\n";
  for (const auto& fv : m.fits) h += render_fit(m, fv, in);
  return h + "</section>\n";
}
}  // namespace vzero::detail::report
