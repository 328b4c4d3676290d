// Writers for fit results: tidy CSV, JSON, the diagnostics table and a short text summary.
// The two tables' columns are declared once each (k_fit_columns, k_diagnostic_columns).
#include <fmt/format.h>
#include <cmath>
#include <nlohmann/json.hpp>

#include "core/columns.hpp"
#include "fit/estimate_json.hpp"
#include "vzero/fit.hpp"

namespace vzero {

namespace {

constexpr const char* k_aic_formula =
    "AIC = n*(ln(2*pi) + 1 - ln(n) + ln(RSS)) - sum(ln(w)) + 2*(p + 1) (Gaussian log-likelihood, as R's AIC for nls)";

std::string joined(const std::vector<std::string>& v, const char* sep) {
  std::string out;
  for (const auto& e : v) {
    if (!out.empty()) out += sep;
    out += e;
  }
  return out;
}

// What the message column says: the failure, or the remarks on an ok fit.
std::string message_of(const FitResult& r) { return r.ok ? joined(r.warnings, "; ") : r.message; }

// One row of the fit table: a parameter (or derived value) of one group's fit; a failed
// fit has one row without an estimate.
struct FitRowRef {
  const TableFit& table;
  const GroupFit& group;
  const ParameterEstimate* estimate;  // nullptr for a failed fit
  std::string_view unit;
};

struct DiagnosticRowRef {
  const TableFit& table;
  const GroupFit& group;
  const DiagnosticRow& d;
};

using detail::CsvOut;
using detail::FieldType;
constexpr FieldType text = FieldType::string, number = FieldType::number, integer = FieldType::integer;
using Fit = const FitRowRef&;
using Diag = const DiagnosticRowRef&;

const std::vector<std::string>& group_columns(const TableFit& t) { return t.group_columns; }
double part(const ParameterEstimate* e, double ParameterEstimate::*member) { return e ? e->*member : NAN; }

constexpr detail::ColumnEntry<FitRowRef, TableFit> k_fit_columns[] = {
    {.name = "",
     .type = text,
     .unit = "",
     .description = "grouping column of the fitted table, passed through",
     .write = [](CsvOut& o, Fit x, std::size_t i) { o.field(x.group.group_values[i]); },
     .each = group_columns},
    {"model", text, "", "rate law fitted (vzero fit --model; one of the registered kinetic models)",
     [](CsvOut& o, Fit x, std::size_t) { o.field(x.group.model->name); }},
    {"parameter", text, "", "parameter or derived value (kcat, kcat/Km); empty when the fit failed",
     [](CsvOut& o, Fit x, std::size_t) { o.field(x.estimate ? std::string_view(x.estimate->name) : ""); }},
    {"estimate", number, "", "least-squares estimate, unit in unit",
     [](CsvOut& o, Fit x, std::size_t) { o.number(part(x.estimate, &ParameterEstimate::estimate)); }},
    {"se", number, "", "standard error of the estimate, from s²(JᵀWJ)⁻¹ at the optimum",
     [](CsvOut& o, Fit x, std::size_t) { o.number(part(x.estimate, &ParameterEstimate::se)); }},
    {"ci_low", number, "", "lower end of the Wald-t interval (95 % unless another level was asked)",
     [](CsvOut& o, Fit x, std::size_t) { o.number(part(x.estimate, &ParameterEstimate::ci_low)); }},
    {"ci_high", number, "", "upper end of the Wald-t interval",
     [](CsvOut& o, Fit x, std::size_t) { o.number(part(x.estimate, &ParameterEstimate::ci_high)); }},
    {"profile_low", number, "",
     "lower end of the profile-t interval; empty when the profile does not reach it or was not computed",
     [](CsvOut& o, Fit x, std::size_t) { o.number(part(x.estimate, &ParameterEstimate::profile_low)); }},
    {"profile_high", number, "", "upper end of the profile-t interval; empty as for profile_low",
     [](CsvOut& o, Fit x, std::size_t) { o.number(part(x.estimate, &ParameterEstimate::profile_high)); }},
    {"unit", text, "", "unit of the estimate; empty when the table does not give it",
     [](CsvOut& o, Fit x, std::size_t) { o.field(x.unit); }},
    {"n", integer, "", "points fitted", [](CsvOut& o, Fit x, std::size_t) { o.integer(x.group.result.n); }},
    {"df", integer, "", "residual degrees of freedom, n minus parameters",
     [](CsvOut& o, Fit x, std::size_t) {
       if (x.group.result.ok) o.integer(x.group.result.df);
     }},
    {"rss", number, "", "weighted residual sum of squares at the optimum",
     [](CsvOut& o, Fit x, std::size_t) {
       if (x.group.result.ok) o.number(x.group.result.rss);
     }},
    {"residual_sd", number, "", "residual standard deviation, √(rss/df)",
     [](CsvOut& o, Fit x, std::size_t) {
       if (x.group.result.ok) o.number(x.group.result.residual_sd);
     }},
    {"aic", number, "", "Akaike information criterion (Gaussian log-likelihood, as R's AIC for nls)",
     [](CsvOut& o, Fit x, std::size_t) {
       if (x.group.result.ok) o.number(x.group.result.aic);
     }},
    {"converged", FieldType::boolean, "", "true when the fit reached an optimum inside the bounds",
     [](CsvOut& o, Fit x, std::size_t) { o.field(x.group.result.converged ? "true" : "false"); }},
    {"iterations", integer, "", "Levenberg–Marquardt iterations",
     [](CsvOut& o, Fit x, std::size_t) { o.integer(x.group.result.iterations); }},
    {"weighting", text, "", "weights of the points: none, replicate-sd or relative",
     [](CsvOut& o, Fit x, std::size_t) { o.field(to_string(x.table.weighting)); }},
    {"message", text, "", "why the fit failed, or remarks on an ok fit ('; '-separated)",
     [](CsvOut& o, Fit x, std::size_t) { o.field(message_of(x.group.result)); }},
};

std::string_view x_unit(const TableFit& t) { return t.x_unit; }
std::string_view v_unit(const TableFit& t) { return t.v_unit; }
std::string_view inhibitor_unit(const TableFit& t) { return t.inhibitor_unit; }

constexpr detail::ColumnEntry<DiagnosticRowRef, TableFit> k_diagnostic_columns[] = {
    {.name = "",
     .type = text,
     .unit = "",
     .description = "grouping column of the fitted table, passed through",
     .write = [](CsvOut& o, Diag x, std::size_t i) { o.field(x.group.group_values[i]); },
     .each = group_columns},
    {"model", text, "", "rate law fitted", [](CsvOut& o, Diag x, std::size_t) { o.field(x.group.model->name); }},
    {"kind", text, "", "point (a fitted point) or curve (the model drawn between the points)",
     [](CsvOut& o, Diag x, std::size_t) { o.field(x.d.curve ? "curve" : "point"); }},
    {.name = "s",
     .type = number,
     .description = "substrate concentration",
     .write = [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.s); },
     .unit_of = x_unit},
    {.name = "inhibitor",
     .type = number,
     .description = "inhibitor concentration; empty for single-substrate models",
     .write = [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.inhibitor); },
     .unit_of = inhibitor_unit},
    {.name = "v",
     .type = number,
     .description = "rate: as measured on point rows, the model's on curve rows",
     .write = [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.v); },
     .unit_of = v_unit},
    {.name = "fitted",
     .type = number,
     .description = "model rate at (s, inhibitor)",
     .write = [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.fitted); },
     .unit_of = v_unit},
    {.name = "residual",
     .type = number,
     .description = "v − fitted; empty on curve rows",
     .write = [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.residual); },
     .unit_of = v_unit},
    {"weight", number, "", "the point's weight in the fit; empty on curve rows",
     [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.weight); }},
    {"inv_s", number, "", "1/s, a double-reciprocal plot coordinate (a diagnostic, never the estimate)",
     [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.inv_s); }},
    {"inv_v", number, "", "1/v, a double-reciprocal plot coordinate",
     [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.inv_v); }},
    {"s_over_v", number, "", "s/v, a Hanes–Woolf plot coordinate",
     [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.s_over_v); }},
    {"v_over_s", number, "", "v/s, an Eadie–Hofstee plot coordinate",
     [](CsvOut& o, Diag x, std::size_t) { o.number(x.d.v_over_s); }},
};

std::string g6(double x) { return std::isnan(x) ? "-" : fmt::format("{:.6g}", x); }

using detail::estimate_json;

nlohmann::json matrix_json(const Eigen::MatrixXd& m) {
  nlohmann::json rows = nlohmann::json::array();
  for (Eigen::Index a = 0; a < m.rows(); ++a) {
    nlohmann::json row = nlohmann::json::array();
    for (Eigen::Index b = 0; b < m.cols(); ++b) row.push_back(m(a, b));
    rows.push_back(row);
  }
  return rows;
}

std::string group_label(const TableFit& t, const GroupFit& g) {
  if (t.group_columns.empty()) return "all rows";
  std::vector<std::string> parts;
  for (std::size_t k = 0; k < t.group_columns.size(); ++k)
    parts.push_back(t.group_columns[k] + " = " + g.group_values[k]);
  return joined(parts, ", ");
}

}  // namespace

std::vector<FieldSpec> fit_fields(const TableFit& t) {
  return detail::schema_fields(detail::columns_for<FitRowRef, TableFit>(k_fit_columns, t));
}

std::string fit_csv(const TableFit& t) {
  const auto columns = detail::columns_for<FitRowRef, TableFit>(k_fit_columns, t);
  CsvOut out;
  detail::write_header(out, columns);
  for (const GroupFit& g : t.fits) {
    const FitResult& r = g.result;
    if (!r.ok) {
      detail::write_row(out, columns, FitRowRef{t, g, nullptr, ""});
      continue;
    }
    for (std::size_t k = 0; k < r.parameters.size(); ++k)
      detail::write_row(out, columns, FitRowRef{t, g, &r.parameters[k], g.units[k]});
    for (std::size_t k = 0; k < g.derived.size(); ++k)
      detail::write_row(out, columns, FitRowRef{t, g, &g.derived[k], g.units[r.parameters.size() + k]});
  }
  return out.str();
}

std::string fit_json(const TableFit& t, const FitTableOptions& o) {
  nlohmann::json j;
  j["tool"] = "vzero fit";
  j["version"] = VZERO_VERSION;
  j["source"] = t.source;
  j["x_column"] = t.x_column;
  j["y_column"] = t.y_column;
  j["inhibitor_column"] = t.inhibitor_column;
  j["enzyme_column"] = t.enzyme_column;
  j["sd_column"] = t.sd_column;
  j["group_columns"] = t.group_columns;
  j["weighting"] = std::string(to_string(t.weighting));
  j["units"] = {{"v", t.v_unit}, {"x", t.x_unit}, {"inhibitor", t.inhibitor_unit}, {"enzyme", t.enzyme_unit}};
  j["rows"] = {{"read", t.rows_read},
               {"used", t.rows_used},
               {"flagged_skipped", t.rows_flagged},
               {"other_role_skipped", t.rows_other_role},
               {"empty_skipped", t.rows_missing}};
  j["notes"] = t.notes;
  j["aic_formula"] = k_aic_formula;
  j["covariance_formula"] = "s^2 (J'WJ)^-1 at the optimum, natural parameter scale, s^2 = RSS/df";
  nlohmann::json models = nlohmann::json::array();
  for (const KineticModel* m : o.models) models.push_back(m->name);
  j["options"] = {{"models", models},
                  {"include_flagged", o.include_flagged},
                  {"role", o.role},
                  {"max_iterations", o.fit.max_iterations},
                  {"tolerance", o.fit.tolerance},
                  {"confidence", o.fit.confidence},
                  {"profile", o.fit.profile},
                  {"start", o.fit.start}};
  if (!o.fit.fixed.empty()) j["options"]["fixed"] = o.fit.fixed;
  nlohmann::json fits = nlohmann::json::array();
  for (const GroupFit& g : t.fits) {
    const FitResult& r = g.result;
    nlohmann::json f;
    nlohmann::json group = nlohmann::json::object();
    for (std::size_t k = 0; k < t.group_columns.size(); ++k) group[t.group_columns[k]] = g.group_values[k];
    f["group"] = group;
    f["model"] = g.model->name;
    f["formula"] = g.model->formula;
    f["parameter_names"] = g.model->parameter_names();
    f["ok"] = r.ok;
    f["message"] = r.message;
    f["warnings"] = r.warnings;
    f["converged"] = r.converged;
    f["iterations"] = r.iterations;
    f["start_method"] = r.start_method;
    f["start"] = r.start;
    f["n"] = r.n;
    f["df"] = r.df;
    f["rss"] = r.rss;
    f["residual_sd"] = r.residual_sd;
    f["aic"] = r.aic;
    f["t_quantile"] = r.t_quantile;
    f["relative_offset"] = r.relative_offset;
    nlohmann::json params = nlohmann::json::array(), derived = nlohmann::json::array();
    for (std::size_t k = 0; k < r.parameters.size(); ++k) params.push_back(estimate_json(r.parameters[k], g.units[k]));
    for (std::size_t k = 0; k < g.derived.size(); ++k)
      derived.push_back(estimate_json(g.derived[k], g.units[r.parameters.size() + k]));
    f["parameters"] = params;
    f["derived"] = derived;
    f["enzyme_conc"] = g.enzyme_conc;
    f["covariance"] = matrix_json(r.covariance);
    f["correlation"] = matrix_json(r.correlation);
    f["source_lines"] = g.lines;
    fits.push_back(f);
  }
  j["fits"] = fits;
  return j.dump(2) + "\n";
}

std::vector<FieldSpec> fit_diagnostics_fields(const TableFit& t) {
  return detail::schema_fields(detail::columns_for<DiagnosticRowRef, TableFit>(k_diagnostic_columns, t));
}

std::string fit_diagnostics_csv(const TableFit& t) {
  const auto columns = detail::columns_for<DiagnosticRowRef, TableFit>(k_diagnostic_columns, t);
  CsvOut out;
  detail::write_header(out, columns);
  for (const GroupFit& g : t.fits) {
    if (!g.result.ok) continue;
    for (const DiagnosticRow& d : diagnostics(g.s, g.inhibitor, g.v, g.weights, g.result))
      detail::write_row(out, columns, DiagnosticRowRef{t, g, d});
  }
  return out.str();
}

std::string fit_text(const TableFit& t) {
  std::string out = fmt::format("{}: x = {}, y = {}{}, weighting {}; {} of {} rows used\n", t.source, t.x_column,
                                t.y_column, t.inhibitor_column.empty() ? "" : ", inhibitor = " + t.inhibitor_column,
                                to_string(t.weighting), t.rows_used, t.rows_read);
  for (const auto& note : t.notes) out += "  note: " + note + "\n";
  for (const GroupFit& g : t.fits) {
    const FitResult& r = g.result;
    out += fmt::format("\n{} | {}: {}\n", group_label(t, g), g.model->name, g.model->formula);
    if (!r.ok) {
      out += fmt::format("  no fit ({} points): {}\n", r.n, r.message);
      continue;
    }
    out += fmt::format("  n {}, df {}, RSS {}, residual SD {}, AIC {}, converged in {} iterations (start: {})\n", r.n,
                       r.df, g6(r.rss), g6(r.residual_sd), g6(r.aic), r.iterations, r.start_method);
    out += fmt::format("  {:<10} {:>12} {:>12} {:>27} {:>27}  {}\n", "parameter", "estimate", "SE", "95% Wald-t",
                       "95% profile-t", "unit");
    auto line = [&](const ParameterEstimate& e, const std::string& unit) {
      out += fmt::format("  {:<10} {:>12} {:>12} {:>27} {:>27}  {}\n", e.name, g6(e.estimate), g6(e.se),
                         fmt::format("[{}, {}]", g6(e.ci_low), g6(e.ci_high)),
                         fmt::format("[{}, {}]", g6(e.profile_low), g6(e.profile_high)), unit);
    };
    for (std::size_t k = 0; k < r.parameters.size(); ++k) line(r.parameters[k], g.units[k]);
    for (std::size_t k = 0; k < g.derived.size(); ++k) line(g.derived[k], g.units[r.parameters.size() + k]);
    for (Eigen::Index a = 0; a < r.correlation.rows(); ++a)
      for (Eigen::Index b = a + 1; b < r.correlation.cols(); ++b)
        if (!std::isnan(r.parameters[static_cast<std::size_t>(a)].se + r.parameters[static_cast<std::size_t>(b)].se))
          out += fmt::format("  corr({}, {}) = {:.4f}\n", r.parameters[static_cast<std::size_t>(a)].name,
                             r.parameters[static_cast<std::size_t>(b)].name, r.correlation(a, b));
    for (const auto& w : r.warnings) out += "  note: " + w + "\n";
  }
  return out;
}

}  // namespace vzero
