// Progress-curve fit: Km and Vmax (or kcat) from whole product-against-time curves of a
// substrate series, fitted globally, instead of from initial rates.
//
// Model (integrated Michaelis–Menten; Schnell & Mendoza, J. Theor. Biol. 187, 1997; Goudar,
// Sonnad & Duggleby, Biochim. Biophys. Acta 1429, 1999), per well w with initial substrate
// S0_w, read at time t (reaction time τ = t + lead):
//   S(τ) = Km·W0((S0/Km)·exp((S0 − Vmax·τ)/Km)),   y = S0 − S(τ) + b_w
// W0 the principal branch of Lambert W (Boost.Math), b_w the well's baseline offset. With an
// enzyme column Vmax_w = kcat·[E]_w. With competitive product inhibition (Kp; the integrated
// form in Duggleby, Methods Enzymol. 249, 1995), v = Vmax·S/(Km·(1 + P/Kp) + S) integrates to
//   a·ln(S0/S) + b·(S0 − S) = Vmax·τ,   a = Km·(1 + S0/Kp),  b = 1 − Km/Kp,
//   S(τ) = (a/b)·W0((b·S0/a)·exp((b·S0 − Vmax·τ)/a))   (S0·exp(−Vmax·τ/a) when b = 0),
// which is Michaelis–Menten for Kp → ∞ (a = Km, b = 1).
//
// Least squares over every read of every well at once (Levenberg–Marquardt, analytic
// Jacobian from the implicit equation: ∂S/∂θ = S·∂F/∂θ / (a + b·S), which for
// Michaelis–Menten is the dW/dx = W/(x(1 + W)) rule); Km, Vmax, kcat, Kp on the log scale
// (positive), offsets and lead on their own. SE from s²·(JᵀJ)⁻¹ (model-based) and from the
// cluster-robust sandwich (CR3, fit/progress_model.hpp: the offsets partialled out, each
// cluster's residuals r_g scaled by (I − H_gg)⁻¹, close to the jackknife over clusters; CR1,
// (JᵀJ)⁻¹·Σ_g (J_gᵀr_g)(J_gᵀr_g)ᵀ·(JᵀJ)⁻¹·G/(G−1)·(N−1)/(N−p), when a cluster alone determines
// a parameter; clusters g the wells sharing a blank set, or single wells; Cameron & Miller,
// J. Human Resources 50, 2015); the printed Wald interval is the wider of est ± t(df)·SE_model and
// est ± t(G−1)·SE_cluster, the profile-t cutoff stretched by the same factor. AIC as `vzero
// fit` computes it (unit weights).
//
// **Example**:
//   std::vector<vzero::ProgressWell> wells = ...;  // t_s, p per well, s0 in p's unit
//   vzero::ProgressFit f = vzero::fit_progress(wells, {});
//   if (f.ok) use(f.find("Km")->estimate);
#pragma once

#include <Eigen/Core>
#include <cmath>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/fit.hpp"
#include "vzero/table.hpp"

namespace vzero {

// S(τ) of the integrated equation above (Kp = INFINITY: Michaelis–Menten). τ in minutes when
// vmax is per minute; concentrations in one unit. τ ≤ 0 gives S0.
double progress_substrate(double tau, double s0, double km, double vmax, double kp = INFINITY);

struct ProgressWell {
  std::string well;                // e.g. "B7" (with the source when a fit spans exports)
  double s0 = NAN;                 // initial substrate, in the unit of p
  double enzyme = NAN;             // enzyme concentration (kcat fits), else NaN
  std::vector<double> t_s, p;      // read times (s) and product (corrected, converted)
  bool trusted_only = false;       // only the reads the rate finder used (fit_progress_tables)
  std::string cluster;             // wells with one non-empty key share errors (the same blank
                                   // wells); empty: the well is a cluster of its own
  std::vector<double> t_left_s, p_left;  // ok reads the fit left out (drawn apart in the report)
};

struct ProgressOptions {
  bool product_inhibition = false;  // fit Kp as well
  bool fit_lead = false;            // estimate the lead (reaction start before time 0)
  double lead_s = 0;                // the lead when not estimated, s
  bool use_enzyme = false;          // Vmax_w = kcat·[E]_w (every well needs `enzyme` > 0)
  bool vmax_per_level = false;      // one Vmax per distinct `enzyme` (Km shared; not with use_enzyme);
                                    // parameters "Vmax[E=<level>]", levels ascending
  std::vector<double> start;        // Km, Vmax (every level's) or kcat (per min), [Kp]; empty = automatic
  int max_iterations = 200;
  double confidence = 0.95;
  bool profile = true;              // profile-t intervals of the shared parameters
  // Empty if valid, else e.g. "lead_s is nan; give a finite lead".
  std::string validate() const;
};

struct ProgressFit {
  bool ok = false;
  std::string message;              // why there is no fit
  std::string model;                // "mm" or "mm-product-inhibition"
  std::vector<ParameterEstimate> parameters;  // Km, Vmax|kcat|Vmax[E=…] per level, [Kp], [lead_s];
                                              // se and ci_* of the wider interval (see above)
  std::vector<double> se_model, se_cluster;   // per parameter: s²(JᵀJ)⁻¹ and cluster-robust SE
  std::vector<bool> cluster_wider;            // per parameter: the cluster interval is the printed one
  int clusters = 0;                           // G: blank sets (when 5 or more), else wells
  std::string cluster_by;                     // "blank sets" or "wells"
  std::string cluster_formula;                // "CR3", or "CR1" when a cluster alone determines a parameter
  double t_cluster = NAN;                     // t(1 − α/2, G − 1)
  std::vector<ParameterEstimate> offsets;     // b_w per well (wells order; model-based SE)
  bool converged = false;
  int iterations = 0;
  int n = 0, df = 0;
  double rss = NAN, residual_sd = NAN, aic = NAN, t_quantile = NAN;
  std::vector<std::vector<double>> fitted, residuals;  // per well, per read kept
  const ParameterEstimate* find(std::string_view name) const;
};

// Fits all wells at once. Throws UsageError for invalid options or a well whose s0, t or p
// are not finite; a set the data cannot support returns ok = false with a message.
ProgressFit fit_progress(const std::vector<ProgressWell>& wells, const ProgressOptions& options);

// The fitted product of well `w` (wells[w] of the fit) at read times t_s: S0 − S(t + lead) + offset,
// with the fit's Km, Vmax (kcat·[E], or the well's level's Vmax), Kp and lead (`lead_s` when
// the lead was not fitted). NaN everywhere when the fit is not ok.
std::vector<double> progress_curve(const ProgressFit& fit, std::size_t w, const ProgressWell& well, double lead_s,
                                   const std::vector<double>& t_s);

// The likelihood-ratio test of Michaelis–Menten (nested) against product inhibition, both
// fitted to the same reads: statistic n·ln(RSS₀/RSS₁), χ² with 1 df, and AIC; the verdict in words.
struct ModelChoice {
  double statistic = NAN, p_value = NAN, aic_mm = NAN, aic_pi = NAN;
  std::string verdict;
};
ModelChoice compare_progress_models(const ProgressFit& mm, const ProgressFit& pi);

// ---- Enzyme stability (Selwyn's test) ----
//
// Selwyn (Biochim. Biophys. Acta 97, 42–46, 1965): an enzyme that keeps its activity makes
// product at dP/dt = [E]·g(P, S0) whatever its rate law (depletion, product inhibition), so at
// one S0 product against [E]·τ is one curve for every enzyme amount. The test, at each S0 with
// two or more enzyme levels: the reads up to u_common, the [E]·τ every level reaches (τ = read
// time + lead, min); product = b_w + Σ_{d=1..4} c_d·(u/u_common)^d with one curve per enzyme
// level (full model) or one curve for all (reduced), an intercept per well in both; the
// nested-model F test (linear least squares, exact under normal noise), by generalized least
// squares when the reads of one time share an error (wells subtracting one blank share its read
// noise): cov = σ_e²·I + σ_b²·11ᵀ among the reads of one time, σ_b² and σ_e² from the ordinary
// fit's residuals by moments (`shared_noise` = σ_b²/(σ_e² + σ_b²)); the error term is the
// scatter between replicate wells (one curve per well against one per level, (W − L)·4 df)
// when some level has two or more wells, else the reads' (`replicate_error`). P*, the curves,
// the intercepts and et_ratio come from the ordinary fit. Its size: the [E]·τ
// each level needs to make P* (half the smallest product the levels' curves reach at
// u_common); `et_ratio` = the lowest level's over the highest's (> 1: the lowest level, read
// longest per unit enzyme, made less product than [E]·τ promises: it lost activity).
// `unstable` when p < 0.01 and et_ratio > 1.05. A well with fewer than 6 reads up to u_common
// is left out (one at a time, u_common recomputed), and the S0 is tested on the levels left.
struct StabilityLevel {
  double enzyme = NAN;     // the enzyme amount (the enzyme column's unit)
  int wells = 0, reads = 0;  // reads within u_common
  double et_needed = NAN;  // [E]·τ to make P*, enzyme unit × min
};

struct StabilityTest {
  double s0 = NAN;                     // the substrate level, in the unit of p
  std::vector<StabilityLevel> levels;  // ascending enzyme
  bool tested = false;                 // false: `verdict` says why not
  double u_common = NAN;               // enzyme unit × min
  double f = NAN, p_value = NAN;
  int df1 = 0, df2 = 0;
  double shared_noise = 0;  // σ_b²/(σ_e² + σ_b²): the error share reads of one time have in common
  bool replicate_error = false;  // the F test's error term: the scatter between replicate wells
  double product_level = NAN;  // P*
  double et_ratio = NAN;  // stated in `verdict` only when p < 0.01 (else noise around 1)
  bool unstable = false;
  std::vector<std::string> left_out;  // "A4 (3 reads)": wells short of 6 reads up to u_common
  std::vector<std::string> wells;     // the wells tested, level by level
  std::vector<double> intercepts;  // their intercepts b_w in the full model (product at [E]·τ = 0)
  std::string verdict;  // in words
};

// One test per S0 that has two or more enzyme levels among `wells` (wells without a finite
// enzyme are ignored); lead_s as in the progress fit; `conc_unit` names P* in the verdict.
std::vector<StabilityTest> stability_tests(const std::vector<ProgressWell>& wells, double lead_s,
                                           const std::string& conc_unit = "");

// ---- From vzero rates' tables ----

struct ProgressTableOptions {
  std::string x_column;                     // initial substrate (plate-map column)
  double x_factor = NAN;                    // traces' concentration unit per x unit (required)
  std::string enzyme_column;                // enzyme amounts: kcat (fit.use_enzyme) or Vmax per level
                                            // (fit.vmax_per_level); either way Selwyn's test per S0
  std::vector<std::string> group_columns;   // one fit per combination
  std::string role = "sample";
  ProgressOptions fit;
  bool both_models = false;                 // also product inhibition, and the comparison
  bool kcat_per_min = false;                // kcat in 1/min (default 1/s) when the units reduce
  std::string validate() const;
};

struct ProgressGroup {
  std::vector<std::string> group_values;
  std::vector<ProgressWell> wells;
  std::vector<std::string> left_out;  // "B7: saturated" (wells the fit cannot use, and why)
  ProgressFit mm, pi;                 // pi fitted only with both_models
  ModelChoice choice;
  std::vector<StabilityTest> stability;  // with an enzyme column: Selwyn's test per S0
  double lead_s = NAN;                   // the lead the stability tests used (fitted or given)
  FitResult rates_fit;                // Michaelis–Menten on the same group's initial rates (x scaled)
};

struct ProgressTable {
  std::string conc_unit, rate_unit;  // e.g. "uM", "uM/min"
  bool kcat_per_min = false;         // kcat reported in 1/min (ProgressTableOptions::kcat_per_min)
  std::vector<std::string> group_columns;
  std::vector<ProgressGroup> groups;
};

// Reads the wells from rates.csv (map columns, flags, notes) and traces.csv (time_s, status,
// concentration, used), fits each group. InputError (file:line:column) for a missing column
// or cell, traces without concentrations, or a well of rates.csv the traces lack.
ProgressTable fit_progress_tables(const Table& rates, const Table& traces, const ProgressTableOptions& options);

// One row per group × method × model × parameter (estimates, SE, Wald and profile intervals,
// unit, n, df, rss, residual_sd, aic, converged, message), a well's offset a row of its own;
// method "progress" or "initial-rates" (the Michaelis–Menten fit of the same group's
// unflagged v0, substrate in the traces' unit). `enzyme_column` names kcat's unit.
std::string progress_csv(const ProgressTable& t, const std::string& enzyme_column = "");
// The unit of a parameter ("Km", "Vmax", "Vmax[E=…]", "kcat", "Kp", "lead_s", "offset").
std::string progress_unit(const ProgressTable& t, const std::string& name, const std::string& enzyme_column = "");
// The fits as one JSON document, in the shape of `vzero fit --json` (tool, version, source,
// units, options, fits[]: per group the progress fits with estimates, SE, Wald and profile
// intervals, residual SD and AIC, the model comparison, the initial-rate fit beside them and
// Selwyn's tests). `traces` is the traces table's path.
std::string progress_json(const ProgressTable& t, const ProgressTableOptions& o, const std::string& source,
                          const std::string& traces);
// One row per read used: group columns, model, well, s0, time_s, product, fitted, residual.
std::string progress_residuals_csv(const ProgressTable& t);
// Selwyn's tests, one row per group and S0 (the names of progress_json's): group columns, s0,
// enzyme_levels, tested, f, df1, df2, p_value, error_term ("replicate wells" or "reads"),
// shared_noise, product_level (P*, the traces' unit), et_ratio, flag
// (`enzyme-unstable` or empty), left_out (wells short of reads), verdict (in words).
std::string progress_stability_csv(const ProgressTable& t);
// Per group: both fits side by side, the wells left out and the model verdict.
std::string progress_text(const ProgressTable& t, const std::string& enzyme_column = "");

}  // namespace vzero
