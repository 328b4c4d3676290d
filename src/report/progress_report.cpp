// The progress-curve report page: header, per group the parameter table, the model
// comparison and Selwyn's tests in words, and the figures (progress_report_charts.cpp).
#include <fmt/format.h>
#include <cmath>

#include "report/report_model.hpp"
#include "report/progress_charts.hpp"
#include "vzero/progress_report.hpp"
#include "vzero/svg.hpp"

namespace vzero {

namespace {

using svg::escape;
using svg::human;

std::string group_label(const ProgressTable& t, const ProgressGroup& g) {
  if (t.group_columns.empty()) return "All sample wells";
  std::string out;
  for (std::size_t k = 0; k < g.group_values.size(); ++k)
    out += fmt::format("{}{} = {}", k ? ", " : "", t.group_columns[k], g.group_values[k]);
  return out;
}

std::string interval(double lo, double hi) {
  if (std::isnan(lo) && std::isnan(hi)) return "–";
  return "[" + human(lo) + ", " + human(hi) + "]";
}

std::string param_row(const std::string& fit, const ParameterEstimate& e, const std::string& unit) {
  return fmt::format(
      "<tr><td>{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>"
      "<td class=\"num\">{}</td><td>{}</td></tr>\n",
      escape(fit), escape(e.name), human(e.estimate), human(e.se), interval(e.ci_low, e.ci_high),
      interval(e.profile_low, e.profile_high), escape(detail::report::display_unit(unit)));
}

std::string fit_rows(const ProgressTable& t, const ProgressFit& f, const std::string& what,
                     const ProgressTableOptions& o) {
  if (!f.ok)
    return fmt::format("<tr><td>{}</td><td colspan=\"6\" class=\"warn\">no fit: {}</td></tr>\n", escape(what),
                       escape(f.message));
  std::string h;
  for (const auto& e : f.parameters) h += param_row(what, e, progress_unit(t, e.name, o.enzyme_column));
  return h;
}

std::string params_table(const ProgressTable& t, const ProgressGroup& g, const ProgressTableOptions& o) {
  std::string h =
      "<table class=\"params\"><thead><tr><th>fit</th><th>parameter</th><th class=\"num\">estimate</th>"
      "<th class=\"num\">SE</th><th class=\"num\">95 % Wald-t</th><th class=\"num\">95 % profile-t</th>"
      "<th>unit</th></tr></thead>\n<tbody>\n";
  h += fit_rows(t, g.mm, "progress curves, Michaelis–Menten", o);
  if (g.pi.n > 0) h += fit_rows(t, g.pi, "progress curves, product inhibition", o);
  const FitResult& r = g.rates_fit;
  if (!r.ok) {
    h += fmt::format("<tr><td>initial rates</td><td colspan=\"6\">no fit: {}</td></tr>\n", escape(r.message));
  } else {
    for (std::size_t k = 0; k < 2; ++k) {  // the registry's mm: Vmax, Km
      ParameterEstimate e = r.parameters[k];
      e.name = k == 1 ? "Km" : o.fit.use_enzyme ? "kcat" : "Vmax";
      h += param_row("initial rates, Michaelis–Menten", e, progress_unit(t, e.name, o.enzyme_column));
    }
  }
  h += "</tbody></table>\n";
  auto stats = [&](const char* what, int n, double sd, double aic, bool ok) {
    if (ok)
      h += fmt::format("<p class=\"stats\">{}: {} points, residual SD {} {}, AIC {}</p>\n", what, n, human(sd),
                       escape(detail::report::display_unit(what[0] == 'i' ? t.rate_unit : t.conc_unit)), human(aic, 6));
  };
  stats("progress curves", g.mm.n, g.mm.residual_sd, g.mm.aic, g.mm.ok);
  stats("initial rates", r.n, r.residual_sd, r.aic, r.ok);
  return h;
}

std::string group_section(const ProgressTable& t, const ProgressGroup& g, const ProgressTableOptions& o,
                          std::size_t index) {
  std::string h = fmt::format("<section id=\"g{}\">\n<h2>{}</h2>\n", index + 1, escape(group_label(t, g)));
  h += fmt::format("<p class=\"note\">{} wells, {} reads fitted.", g.wells.size(), g.mm.n);
  if (!g.left_out.empty()) {
    h += " Wells left out:";
    for (const auto& w : g.left_out) h += " " + escape(w) + ";";
  }
  h += "</p>\n";
  h += params_table(t, g, o);
  if (!g.choice.verdict.empty()) h += "<p><strong>Which model:</strong> " + escape(g.choice.verdict) + ".</p>\n";
  if (!g.stability.empty()) {
    h += "<h3>Enzyme stability (Selwyn's test)</h3>\n";
    for (const auto& s : g.stability) {
      h += fmt::format("<p{}><strong>S0 = {} {}{}:</strong> {}.</p>\n", s.unstable ? " class=\"warn\"" : "",
                       human(s.s0), escape(detail::report::display_unit(t.conc_unit)),
                       s.unstable ? " — flag enzyme-unstable" : "", escape(s.verdict));
      if (s.tested) h += detail::report::stability_chart(t, g, s);
    }
  }
  if (!g.wells.empty()) {
    h += "<h3>Wells</h3>\n";
    h += detail::report::progress_well_panels(t, g, o);
  }
  h += "</section>\n";
  return h;
}

}  // namespace

std::string progress_report_html(const ProgressTable& t, const ProgressTableOptions& o, const std::string& source,
                                 const std::string& traces, const std::string& title_in) {
  const std::string title = title_in.empty() ? "Progress curves: " + source : title_in;
  std::string h =
      "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n"
      "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n";
  h += "<meta name=\"generator\" content=\"vzero " + std::string(VZERO_VERSION) + "\"/>\n";
  h += "<title>" + escape(title) + "</title>\n<style>" + detail::report::page_css() +
       ".chart-small{margin:0;width:250px}</style>\n</head>\n<body>\n<main>\n";
  h += "<header>\n<p class=\"kicker\">vzero progress</p>\n<h1>" + escape(title) + "</h1>\n";
  h += fmt::format(
      "<p class=\"meta\">Rates table {} · traces {} · S0 from column {} (× {} to {}) · enzyme {} · lead {}</p>\n",
      escape(source), escape(traces), escape(o.x_column), human(o.x_factor, 6),
      escape(detail::report::display_unit(t.conc_unit)),
      o.enzyme_column.empty() ? std::string("not given")
                              : escape(o.enzyme_column) + (o.fit.use_enzyme       ? " (kcat shared)"
                                                           : o.fit.vmax_per_level ? " (Vmax per level)"
                                                                                  : ""),
      o.fit.fit_lead ? std::string("fitted") : human(o.fit.lead_s) + " s (given)");
  h += "<p class=\"lede\">Each group's substrate series fitted at once by the integrated Michaelis–Menten "
       "equation (Lambert W closed form): Km shared, Vmax (or kcat) shared, an offset per well; beside it the "
       "Michaelis–Menten fit of the same wells' initial rates.</p>\n";
  if (t.groups.size() > 1) {
    h += "<nav class=\"toc\">";
    for (std::size_t k = 0; k < t.groups.size(); ++k)
      h += fmt::format("<a href=\"#g{}\">{}</a>", k + 1, escape(group_label(t, t.groups[k])));
    h += "</nav>\n";
  }
  h += "</header>\n";
  for (std::size_t k = 0; k < t.groups.size(); ++k) h += group_section(t, t.groups[k], o, k);
  h += "<footer><p class=\"note\">Drawn by vzero progress from the tables of one vzero rates run; the numbers are "
       "those of its -o table and --json document.</p></footer>\n";
  h += "</main>\n</body>\n</html>\n";
  return h;
}

}  // namespace vzero
