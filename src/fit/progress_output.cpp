// The progress-curve fit's tables and its console summary.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "core/csv_write.hpp"
#include "fit/turnover_units.hpp"
#include "vzero/plate_map.hpp"
#include "vzero/progress.hpp"

namespace vzero {

namespace {

void header(detail::CsvOut& o, const std::vector<std::string>& groups, std::initializer_list<std::string_view> names) {
  bool first = true;
  for (const auto& c : groups) o.field(c), o.separator();
  for (auto n : names) {
    if (!first) o.separator();
    o.field(n);
    first = false;
  }
  o.end_row();
}

// kcat's unit and factor: 1/s when the traces' and the enzyme column's units are molar
// (fit/turnover_units.hpp), else the fitted per-min-per-enzyme-unit with the reason.
detail::TurnoverUnits kcat_units(const ProgressTable& t, const std::string& enzyme_unit) {
  return detail::turnover_units(t.rate_unit, enzyme_unit, t.conc_unit, t.kcat_per_min);
}

// An estimate in the unit unit_of gives it (kcat reduced; the others as fitted).
ParameterEstimate in_unit(const ProgressTable& t, const ParameterEstimate& e, std::string_view name,
                          const std::string& enzyme_unit) {
  ParameterEstimate out = e;
  if (name == "kcat") detail::scale_estimate(out, kcat_units(t, enzyme_unit).kcat_factor);
  return out;
}

// Units of the shared parameters: Km and Kp in the traces' concentration, Vmax per min,
// kcat in 1/s, or per min per unit of enzyme when the units do not reduce.
std::string unit_of(const ProgressTable& t, const std::string& name, const std::string& enzyme_unit) {
  if (name == "Km" || name == "Kp" || name == "offset") return t.conc_unit;
  if (name == "Vmax" || name.rfind("Vmax[", 0) == 0) return t.rate_unit;
  if (name == "kcat" && kcat_units(t, enzyme_unit).kcat_why.empty()) return kcat_units(t, enzyme_unit).kcat_unit;
  if (name == "kcat") return t.rate_unit + " per " + (enzyme_unit.empty() ? "enzyme unit" : enzyme_unit);
  if (name == "lead_s") return "s";
  return "";
}

void estimate_cells(detail::CsvOut& o, const ParameterEstimate& e) {
  for (double v : {e.estimate, e.se, e.ci_low, e.ci_high, e.profile_low, e.profile_high}) {
    o.separator();
    o.number(v);
  }
}

// se_model, se_cluster, interval ("model" or "cluster": which one ci_low/ci_high are), clusters.
void spread_cells(detail::CsvOut& o, double se_model, double se_cluster, std::string_view interval, int clusters) {
  o.separator(), o.number(se_model), o.separator(), o.number(se_cluster), o.separator(), o.field(interval);
  o.separator();
  if (clusters > 0) o.integer(clusters);
}

void row_head(detail::CsvOut& o, const ProgressGroup& g, std::string_view method, std::string_view model,
              std::string_view parameter, std::string_view well) {
  for (const auto& v : g.group_values) {
    o.field(v);
    o.separator();
  }
  o.field(method), o.separator(), o.field(model), o.separator(), o.field(parameter), o.separator(), o.field(well);
}

void fit_tail(detail::CsvOut& o, const std::string& unit, int n, int df, double rss, double sd, double aic,
              bool converged, const std::string& message) {
  o.separator(), o.field(unit), o.separator(), o.integer(n), o.separator(), o.integer(df), o.separator();
  o.number(rss), o.separator(), o.number(sd), o.separator(), o.number(aic), o.separator();
  o.integer(converged ? 1 : 0), o.separator(), o.field(message), o.end_row();
}

void progress_rows(detail::CsvOut& o, const ProgressTable& t, const ProgressGroup& g, const ProgressFit& f,
                   const std::string& enzyme_unit, const std::string& message) {
  if (!f.ok) {
    row_head(o, g, "progress", f.model, "", "");
    for (int k = 0; k < 10; ++k) o.separator();
    fit_tail(o, "", f.n, f.df, NAN, NAN, NAN, false, f.message);
    return;
  }
  auto one = [&](const ParameterEstimate& e, std::string_view name, std::string_view well, std::size_t k) {
    row_head(o, g, "progress", f.model, name, well);
    const ParameterEstimate u = in_unit(t, e, name, enzyme_unit);
    estimate_cells(o, u);
    const double factor = e.se > 0 ? u.se / e.se : 1.0;  // kcat's unit factor
    if (k < f.se_model.size())
      spread_cells(o, factor * f.se_model[k], factor * f.se_cluster[k], f.cluster_wider[k] ? "cluster" : "model",
                   f.clusters);
    else
      spread_cells(o, u.se, NAN, "model", 0);  // an offset: model-based
    fit_tail(o, unit_of(t, std::string(name), enzyme_unit), f.n, f.df, f.rss, f.residual_sd, f.aic, f.converged,
             message.empty() ? f.message : message);
  };
  for (std::size_t k = 0; k < f.parameters.size(); ++k) one(f.parameters[k], f.parameters[k].name, "", k);
  for (const auto& e : f.offsets) one(e, "offset", e.name, f.se_model.size());
}

}  // namespace

std::string progress_unit(const ProgressTable& t, const std::string& name, const std::string& enzyme_column) {
  return unit_of(t, name, enzyme_column.empty() ? "" : split_header_unit(enzyme_column).second);
}

std::string progress_csv(const ProgressTable& t, const std::string& enzyme_column) {
  detail::CsvOut o;
  header(o, t.group_columns,
         {"method", "model", "parameter", "well", "estimate", "se", "ci_low", "ci_high", "profile_low",
          "profile_high", "se_model", "se_cluster", "interval", "clusters", "unit", "n", "df", "rss", "residual_sd",
          "aic", "converged", "message"});
  const std::string enzyme_unit = enzyme_column.empty() ? "" : split_header_unit(enzyme_column).second;
  for (const auto& g : t.groups) {
    progress_rows(o, t, g, g.mm, enzyme_unit, "");
    if (g.pi.n > 0) progress_rows(o, t, g, g.pi, enzyme_unit, g.choice.verdict);
    const FitResult& r = g.rates_fit;
    const std::string v_name = enzyme_column.empty() ? "Vmax" : "kcat";
    if (!r.ok) {
      row_head(o, g, "initial-rates", "mm", "", "");
      for (int k = 0; k < 10; ++k) o.separator();
      fit_tail(o, "", r.n, r.df, NAN, NAN, NAN, false, r.message);
      continue;
    }
    for (std::size_t j = 0; j < 2; ++j) {
      const std::string name = j == 0 ? v_name : "Km";
      row_head(o, g, "initial-rates", "mm", name, "");
      const ParameterEstimate u = in_unit(t, r.parameters[j], name, enzyme_unit);
      estimate_cells(o, u);
      spread_cells(o, u.se, NAN, "model", 0);
      fit_tail(o, unit_of(t, name, enzyme_unit), r.n, r.df, r.rss, r.residual_sd, r.aic, r.converged, "");
    }
  }
  return o.str();
}

std::string progress_residuals_csv(const ProgressTable& t) {
  detail::CsvOut o;
  header(o, t.group_columns, {"model", "well", "s0", "time_s", "product", "fitted", "residual"});
  for (const auto& g : t.groups) {
    for (const ProgressFit* f : {&g.mm, &g.pi}) {
      if (!f->ok) continue;
      for (std::size_t w = 0; w < g.wells.size(); ++w) {
        const ProgressWell& pw = g.wells[w];
        for (std::size_t i = 0; i < pw.p.size(); ++i) {
          for (const auto& v : g.group_values) o.field(v), o.separator();
          o.field(f->model), o.separator(), o.field(pw.well), o.separator(), o.number(pw.s0), o.separator();
          o.number(pw.t_s[i]), o.separator(), o.number(pw.p[i]), o.separator(), o.number(f->fitted[w][i]);
          o.separator(), o.number(f->residuals[w][i]), o.end_row();
        }
      }
    }
  }
  return o.str();
}

std::string progress_stability_csv(const ProgressTable& t) {
  detail::CsvOut o;
  header(o, t.group_columns,
         {"s0", "enzyme_levels", "tested", "f", "df1", "df2", "p_value", "error_term", "shared_noise", "product_level",
          "et_ratio", "flag", "left_out", "verdict"});
  for (const auto& g : t.groups)
    for (const StabilityTest& s : g.stability) {
      for (const auto& v : g.group_values) o.field(v), o.separator();
      o.number(s.s0), o.separator();
      o.number(static_cast<double>(s.levels.size())), o.separator();
      o.field(s.tested ? "1" : "0"), o.separator();
      o.number(s.f), o.separator();
      o.number(static_cast<double>(s.df1)), o.separator();
      o.number(static_cast<double>(s.df2)), o.separator();
      o.number(s.p_value), o.separator();
      o.field(!s.tested ? "" : s.replicate_error ? "replicate wells" : "reads"), o.separator();
      o.number(s.tested ? s.shared_noise : NAN), o.separator();
      o.number(s.product_level), o.separator();
      o.number(s.et_ratio), o.separator();
      o.field(s.unstable ? "enzyme-unstable" : ""), o.separator();
      std::string left;
      for (const auto& l : s.left_out) left += (left.empty() ? "" : "; ") + l;
      o.field(left), o.separator();
      o.field(s.verdict), o.end_row();
    }
  return o.str();
}

namespace {
std::string interval(const ParameterEstimate& e) {
  return fmt::format("{:<11.5g} ± {:<9.3g} [{:.5g}, {:.5g}]", e.estimate, e.se, e.ci_low, e.ci_high);
}
}  // namespace

std::string progress_text(const ProgressTable& t, const std::string& enzyme_column) {
  std::string out;
  const std::string enzyme_unit = enzyme_column.empty() ? "" : split_header_unit(enzyme_column).second;
  for (const auto& g : t.groups) {
    std::string name;
    for (std::size_t k = 0; k < g.group_values.size(); ++k)
      name += fmt::format("{}{} = {}", k ? ", " : "", t.group_columns[k], g.group_values[k]);
    out += fmt::format("{}{} wells, {} reads{}\n", name.empty() ? "" : name + ": ", g.wells.size(), g.mm.n,
                       g.left_out.empty() ? "" : fmt::format("; left out: {}", fmt::join(g.left_out, ", ")));
    std::vector<std::string> trusted;
    for (const auto& w : g.wells)
      if (w.trusted_only) trusted.push_back(w.well);
    if (!trusted.empty()) out += fmt::format("  only the rate finder's trusted reads: {}\n", fmt::join(trusted, ", "));
    if (!g.mm.ok) {
      out += "  progress fit: " + g.mm.message + "\n";
    } else {
      std::size_t uw = 12;  // the unit column: as wide as its longest unit ("uM/min per nM")
      for (const auto& e : g.mm.parameters) uw = std::max(uw, unit_of(t, e.name, enzyme_unit).size() + 2);
      out += fmt::format("  {:<8}{:<{}}{:<48}{}\n", "", "", uw, "progress curves (95 % Wald)", "initial rates");
      for (const auto& e : g.mm.parameters) {
        const bool rate_param = e.name == "Vmax" || e.name == "kcat";
        const ParameterEstimate* r = !g.rates_fit.ok ? nullptr : e.name == "Km" ? &g.rates_fit.parameters[1]
                                                           : rate_param       ? &g.rates_fit.parameters[0]
                                                                              : nullptr;
        out += fmt::format("  {:<8}{:<{}}{:<48}{}\n", e.name, unit_of(t, e.name, enzyme_unit), uw,
                           interval(in_unit(t, e, e.name, enzyme_unit)),
                           r ? interval(in_unit(t, *r, e.name, enzyme_unit)) : "");
      }
      out += fmt::format("  residual SD {:.4g} {}, AIC {:.2f}; initial rates: {}\n", g.mm.residual_sd, t.conc_unit,
                         g.mm.aic,
                         g.rates_fit.ok ? fmt::format("{} wells without flags", g.rates_fit.n) : g.rates_fit.message);
      std::string ratios;
      for (std::size_t k = 0; k < g.mm.parameters.size() && k < g.mm.se_cluster.size(); ++k)
        ratios += fmt::format("{}{} {:.2f}", k ? ", " : "", g.mm.parameters[k].name,
                              g.mm.se_cluster[k] / g.mm.se_model[k]);
      out += fmt::format("  cluster-robust ({}) SE over {} {} / model SE: {}; each interval is the wider of the two\n",
                         g.mm.cluster_formula, g.mm.clusters, g.mm.cluster_by, ratios);
    }
    if (g.mm.ok && !enzyme_column.empty() && !kcat_units(t, enzyme_unit).kcat_why.empty())
      out += "  note: kcat stays in " + unit_of(t, "kcat", enzyme_unit) + ": " + kcat_units(t, enzyme_unit).kcat_why +
             "\n";
    if (g.pi.ok)
      out += fmt::format("  with product inhibition: Kp = {:.5g} {} [{:.5g}, {:.5g}]\n", g.pi.find("Kp")->estimate,
                         t.conc_unit, g.pi.find("Kp")->ci_low, g.pi.find("Kp")->ci_high);
    if (!g.choice.verdict.empty()) out += "  model: " + g.choice.verdict + "\n";
    for (const auto& s : g.stability)
      out += fmt::format("  enzyme stability at S0 = {:g} {}{}: {}\n", s.s0, t.conc_unit,
                         s.unstable ? " [flag: enzyme-unstable]" : "", s.verdict);
  }
  return out;
}

}  // namespace vzero
