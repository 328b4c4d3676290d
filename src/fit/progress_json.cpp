// The progress-curve fit as JSON, in the shape of `vzero fit --json`.
#include <nlohmann/json.hpp>

#include "fit/estimate_json.hpp"
#include "vzero/progress.hpp"

namespace vzero {

namespace {

constexpr const char* k_aic_formula =
    "AIC = n*(ln(2*pi) + 1 - ln(n) + ln(RSS)) + 2*(p + 1) (Gaussian log-likelihood, unit weights, as R's AIC for nls)";

using detail::estimate_json;

nlohmann::json progress_fit_json(const ProgressTable& t, const ProgressFit& f, const ProgressTableOptions& o) {
  nlohmann::json j;
  j["model"] = f.model;
  j["ok"] = f.ok;
  j["message"] = f.message;
  j["converged"] = f.converged;
  j["iterations"] = f.iterations;
  j["n"] = f.n;
  j["df"] = f.df;
  j["rss"] = f.rss;
  j["residual_sd"] = f.residual_sd;
  j["aic"] = f.aic;
  j["t_quantile"] = f.t_quantile;
  j["clusters"] = f.clusters;
  j["cluster_by"] = f.cluster_by;
  j["cluster_formula"] = f.cluster_formula;
  j["t_cluster"] = f.t_cluster;
  nlohmann::json params = nlohmann::json::array(), offsets = nlohmann::json::array();
  for (std::size_t k = 0; k < f.parameters.size(); ++k) {
    const ParameterEstimate& e = f.parameters[k];
    nlohmann::json x = estimate_json(e, progress_unit(t, e.name, o.enzyme_column));
    if (k < f.se_model.size()) {
      x["se_model"] = f.se_model[k];
      x["se_cluster"] = f.se_cluster[k];
      x["interval"] = f.cluster_wider[k] ? "cluster" : "model";
    }
    params.push_back(x);
  }
  for (const auto& e : f.offsets) {
    nlohmann::json x = estimate_json(e, t.conc_unit);
    x["well"] = e.name;
    x["name"] = "offset";
    offsets.push_back(x);
  }
  j["parameters"] = params;
  j["offsets"] = offsets;
  return j;
}

nlohmann::json rates_fit_json(const ProgressTable& t, const FitResult& r, const ProgressTableOptions& o) {
  nlohmann::json j;
  j["model"] = "mm";
  j["ok"] = r.ok;
  j["message"] = r.message;
  j["converged"] = r.converged;
  j["n"] = r.n;
  j["df"] = r.df;
  j["rss"] = r.rss;
  j["residual_sd"] = r.residual_sd;
  j["aic"] = r.aic;
  nlohmann::json params = nlohmann::json::array();
  if (r.ok)
    for (std::size_t k = 0; k < 2; ++k) {  // the registry's mm: Vmax, Km; Vmax is kcat with an enzyme column
      const std::string name = k == 1 ? "Km" : o.fit.use_enzyme ? "kcat" : "Vmax";
      ParameterEstimate e = r.parameters[k];
      e.name = name;
      params.push_back(estimate_json(e, progress_unit(t, name, o.enzyme_column)));
    }
  j["parameters"] = params;
  return j;
}

nlohmann::json stability_json(const StabilityTest& s) {
  nlohmann::json levels = nlohmann::json::array();
  for (const auto& l : s.levels)
    levels.push_back({{"enzyme", l.enzyme}, {"wells", l.wells}, {"reads", l.reads}, {"et_needed", l.et_needed}});
  return {{"s0", s.s0},
          {"tested", s.tested},
          {"u_common", s.u_common},
          {"f", s.f},
          {"df1", s.df1},
          {"df2", s.df2},
          {"p_value", s.p_value},
          {"error_term", !s.tested ? "" : s.replicate_error ? "replicate wells" : "reads"},
          {"shared_noise", s.shared_noise},
          {"product_level", s.product_level},
          {"et_ratio", s.et_ratio},
          {"unstable", s.unstable},
          {"verdict", s.verdict},
          {"levels", levels},
          {"wells", s.wells},
          {"intercepts", s.intercepts},
          {"left_out", s.left_out}};
}

nlohmann::json group_json(const ProgressTable& t, const ProgressGroup& g, const ProgressTableOptions& o) {
  nlohmann::json f;
  nlohmann::json group = nlohmann::json::object();
  for (std::size_t k = 0; k < t.group_columns.size(); ++k) group[t.group_columns[k]] = g.group_values[k];
  f["group"] = group;
  nlohmann::json wells = nlohmann::json::array();
  for (const auto& w : g.wells)
    wells.push_back({{"well", w.well},
                     {"s0", w.s0},
                     {"enzyme", w.enzyme},
                     {"reads", w.p.size()},
                     {"trusted_only", w.trusted_only}});
  f["wells"] = wells;
  f["left_out"] = g.left_out;
  nlohmann::json fits = nlohmann::json::array({progress_fit_json(t, g.mm, o)});
  if (g.pi.n > 0) fits.push_back(progress_fit_json(t, g.pi, o));
  f["progress"] = fits;
  if (o.both_models)
    f["model_comparison"] = {{"statistic", g.choice.statistic}, {"df", 1},
                             {"p_value", g.choice.p_value},     {"aic_mm", g.choice.aic_mm},
                             {"aic_pi", g.choice.aic_pi},       {"verdict", g.choice.verdict}};
  f["initial_rates"] = rates_fit_json(t, g.rates_fit, o);
  nlohmann::json stability = nlohmann::json::array();
  for (const auto& s : g.stability) stability.push_back(stability_json(s));
  f["stability"] = stability;
  f["stability_lead_s"] = g.lead_s;
  return f;
}

}  // namespace

std::string progress_json(const ProgressTable& t, const ProgressTableOptions& o, const std::string& source,
                          const std::string& traces) {
  nlohmann::json j;
  j["tool"] = "vzero progress";
  j["version"] = VZERO_VERSION;
  j["source"] = source;
  j["traces"] = traces;
  j["x_column"] = o.x_column;
  j["x_factor"] = o.x_factor;
  j["enzyme_column"] = o.enzyme_column;
  j["enzyme_use"] = o.fit.use_enzyme ? "kcat" : o.fit.vmax_per_level ? "vmax-per-level" : "none";
  j["group_columns"] = t.group_columns;
  j["units"] = {{"v", t.rate_unit}, {"conc", t.conc_unit}};
  j["aic_formula"] = k_aic_formula;
  j["covariance_formula"] =
      "model: s^2 (J'J)^-1 at the optimum, Km, Vmax, kcat, Kp on the log scale, s^2 = RSS/df; cluster (CR3): "
      "A [sum_g X_g' u_g u_g' X_g] A (G-1)/G, X the shared columns of J less their mean within each well, "
      "A = (X'X)^-1, u_g = (I - X_g A X_g')^-1 r_g; or, when a cluster alone determines a parameter, CR1: "
      "(J'J)^-1 [sum_g J_g' r_g r_g' J_g] (J'J)^-1 G/(G-1) (N-1)/(N-p); clusters g the wells sharing a blank set "
      "(5 or more sets) or single wells; each interval the wider of est +- t(df) se_model and est +- t(G-1) se_cluster";
  j["formula"] = "S(t) = Km*W0((S0/Km)*exp((S0 - Vmax*(t + lead))/Km)), product = S0 - S(t) + offset";
  j["options"] = {{"role", o.role},
                  {"fit_lead", o.fit.fit_lead},
                  {"lead_s", o.fit.lead_s},
                  {"product_inhibition", o.both_models},
                  {"max_iterations", o.fit.max_iterations},
                  {"confidence", o.fit.confidence},
                  {"profile", o.fit.profile}};
  nlohmann::json fits = nlohmann::json::array();
  for (const auto& g : t.groups) fits.push_back(group_json(t, g, o));
  j["fits"] = fits;
  return j.dump(2) + "\n";
}

}  // namespace vzero
