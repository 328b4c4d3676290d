// Writers for fit results: tidy CSV, JSON, the diagnostics table and a short text summary.
#include <cmath>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "vzero/fit.hpp"
#include "vzero/table.hpp"

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

std::string csv_row(const std::vector<std::string>& cells) {
  std::string line;
  for (std::size_t k = 0; k < cells.size(); ++k) {
    if (k) line += ',';
    line += csv_field(cells[k]);
  }
  return line + "\n";
}

std::string g6(double x) { return std::isnan(x) ? "-" : fmt::format("{:.6g}", x); }

nlohmann::json estimate_json(const ParameterEstimate& e, const std::string& unit) {
  return {{"name", e.name},
          {"estimate", e.estimate},
          {"se", e.se},
          {"wald", {e.ci_low, e.ci_high}},
          {"profile", {e.profile_low, e.profile_high}},
          {"unit", unit}};
}

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

std::string fit_csv(const TableFit& t) {
  std::vector<std::string> head = t.group_columns;
  for (const char* c : {"model", "parameter", "estimate", "se", "ci_low", "ci_high", "profile_low", "profile_high",
                        "unit", "n", "df", "rss", "residual_sd", "aic", "converged", "iterations", "weighting",
                        "message"})
    head.emplace_back(c);
  std::string out = csv_row(head);
  for (const GroupFit& g : t.fits) {
    const FitResult& r = g.result;
    auto row = [&](const ParameterEstimate* e, const std::string& unit) {
      std::vector<std::string> cells = g.group_values;
      cells.push_back(g.model->name);
      cells.push_back(e ? e->name : "");
      for (double x : {e ? e->estimate : NAN, e ? e->se : NAN, e ? e->ci_low : NAN, e ? e->ci_high : NAN,
                       e ? e->profile_low : NAN, e ? e->profile_high : NAN})
        cells.push_back(format_number(x));
      cells.push_back(unit);
      cells.push_back(std::to_string(r.n));
      cells.push_back(r.ok ? std::to_string(r.df) : "");
      cells.push_back(r.ok ? format_number(r.rss) : "");
      cells.push_back(r.ok ? format_number(r.residual_sd) : "");
      cells.push_back(r.ok ? format_number(r.aic) : "");
      cells.push_back(r.converged ? "true" : "false");
      cells.push_back(std::to_string(r.iterations));
      cells.emplace_back(to_string(t.weighting));
      cells.push_back(message_of(r));
      out += csv_row(cells);
    };
    if (!r.ok) {
      row(nullptr, "");
      continue;
    }
    for (std::size_t k = 0; k < r.parameters.size(); ++k) row(&r.parameters[k], g.units[k]);
    for (std::size_t k = 0; k < g.derived.size(); ++k) row(&g.derived[k], g.units[r.parameters.size() + k]);
  }
  return out;
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

std::string fit_diagnostics_csv(const TableFit& t) {
  std::vector<std::string> head = t.group_columns;
  for (const char* c : {"model", "kind", "s", "inhibitor", "v", "fitted", "residual", "weight", "inv_s", "inv_v",
                        "s_over_v", "v_over_s"})
    head.emplace_back(c);
  std::string out = csv_row(head);
  for (const GroupFit& g : t.fits) {
    if (!g.result.ok) continue;
    for (const DiagnosticRow& d : diagnostics(g.s, g.inhibitor, g.v, g.weights, g.result)) {
      std::vector<std::string> cells = g.group_values;
      cells.push_back(g.model->name);
      cells.emplace_back(d.curve ? "curve" : "point");
      for (double x : {d.s, d.inhibitor, d.v, d.fitted, d.residual, d.weight, d.inv_s, d.inv_v, d.s_over_v, d.v_over_s})
        cells.push_back(format_number(x));
      out += csv_row(cells);
    }
  }
  return out;
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
        out += fmt::format("  corr({}, {}) = {:.4f}\n", r.parameters[static_cast<std::size_t>(a)].name,
                           r.parameters[static_cast<std::size_t>(b)].name, r.correlation(a, b));
    for (const auto& w : r.warnings) out += "  note: " + w + "\n";
  }
  return out;
}

}  // namespace vzero
