// The kinetics fit: Michaelis–Menten and related rate laws fitted to initial rates by
// (weighted) nonlinear least squares, with standard errors, Wald-t and profile-t intervals,
// AIC, and the linearised coordinates kept as diagnostics only.
//
// Models: any registered KineticModel (include/vzero/kinetic_model.hpp); the built-in ones
// (v: rate, S: substrate, I: inhibitor; every parameter is > 0):
//   michaelis_menten      v = Vmax·S / (Km + S)
//   substrate_inhibition  v = Vmax·S / (Km + S·(1 + S/Ki))
//   hill                  v = Vmax·S^n / (K_half^n + S^n)
//   competitive           v = Vmax·S / (Km·(1 + I/Kic) + S)
//   uncompetitive         v = Vmax·S / (Km + S·(1 + I/Kiu))
//   mixed                 v = Vmax·S / (Km·(1 + I/Kic) + S·(1 + I/Kiu))
// (Kic, Kiu: competitive and uncompetitive inhibition constants, as in Cornish-Bowden,
// Fundamentals of Enzyme Kinetics.) And two dose-response models, x the inhibitor
// concentration: 4pl y = bottom + (top − bottom)/(1 + (x/IC50)^hill) (bottom, top of any
// sign) and morrison (tight binding, [E] known); see docs/methods.md.
//
// The estimate minimises Σ wᵢ (vᵢ − f(Sᵢ))² by Levenberg–Marquardt on log-parameters
// (positivity), with analytic Jacobians, inside wide bounds scaled to the data; a parameter
// that runs to a bound makes the fit fail with a message saying what the data lack.
// Standard errors: covariance s²·(JᵀWJ)⁻¹ on the natural scale at the optimum, s² = RSS/df.
// AIC = −2·ln L + 2·(p + 1), ln L the Gaussian log-likelihood at σ² = RSS/n with known
// relative weights: −2 ln L = n·(ln 2π + 1 − ln n + ln RSS) − Σ ln wᵢ (as R's AIC() for nls).
//
// **Example**:
//   std::vector<double> s = {0.02, 0.06, 0.11, 0.22, 0.56, 1.10}, v = {...};
//   vzero::FitResult r = vzero::fit_model(s, v, {}, vzero::kinetic_model("mm"));
//   if (r.ok) use(r.parameters[0].estimate, r.parameters[0].se);  // Vmax
//   else      show(r.message);                                      // why there is no number
#pragma once

#include <Eigen/Core>
#include <cmath>
#include <map>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/enum_names.hpp"
#include "vzero/kinetic_model.hpp"
#include "vzero/table.hpp"

namespace vzero {

enum class Weighting {
  none,          // every point weight 1
  replicate_sd,  // 1/sd² from replicate wells or an sd column
  relative       // 1/v² (constant relative error)
};
template <>
std::span<const EnumName<Weighting>> enum_names<Weighting>();  // none, replicate-sd, relative
std::string_view to_string(Weighting w);
bool parse_weighting(std::string_view text, Weighting& out);

struct FitOptions {
  std::vector<double> start;  // starting values in parameter_names order; empty = automatic
  int max_iterations = 200;   // Levenberg–Marquardt iterations per fit
  double tolerance = 1e-10;   // relative-offset convergence criterion (Bates & Watts 1981)
  double confidence = 0.95;   // level of the Wald-t and profile-t intervals
  bool profile = true;        // compute profile-t intervals (costs a refit per evaluation)
  // Parameters held at a given value, by name (e.g. {"top", 100}): not estimated (no SE, no
  // interval), not counted in df or AIC; a name the model lacks is a UsageError.
  std::map<std::string, double> fixed;
  // Empty if valid, else e.g. "confidence is 1.5; it must lie strictly between 0 and 1".
  std::string validate() const;
};

struct ParameterEstimate {
  std::string name;
  double estimate = NAN;
  double se = NAN;      // √ of the covariance diagonal
  double ci_low = NAN;  // Wald-t: estimate ± t(df)·se
  double ci_high = NAN;
  double profile_low = NAN;   // profile-t (as MASS confint for nls); NaN when the profile
  double profile_high = NAN;  // does not reach the cutoff on that side, or was not computed
};

struct FitResult {
  const KineticModel* model = nullptr;        // the model fitted (registered models never move)
  bool ok = false;                            // false: `message` says why and no numbers are given
  std::string message;                        // e.g. "too few points: 2 rows for 2 parameters ..."
  std::vector<std::string> warnings;          // remarks on an ok fit (open profile, extrapolated Km)
  bool converged = false;                     // reached an optimum inside the bounds
  int iterations = 0;                         // Levenberg–Marquardt iterations of the chosen run
  std::string start_method;                   // "given", "Hanes-Woolf", "Hill plot", "grid"
  std::vector<double> start;                  // the starting values of the chosen run
  std::vector<ParameterEstimate> parameters;  // parameter_names order
  Eigen::MatrixXd covariance;                 // natural scale, s²·(JᵀWJ)⁻¹
  Eigen::MatrixXd correlation;
  int n = 0;                      // points fitted
  int df = 0;                     // n − p
  double rss = NAN;               // Σ wᵢ rᵢ² at the optimum
  double residual_sd = NAN;       // √(rss/df)
  double aic = NAN;               // see the header comment
  double t_quantile = NAN;        // t(1 − (1 − confidence)/2, df)
  double relative_offset = NAN;   // convergence criterion at the optimum
  std::vector<double> fitted;     // model rate per point
  std::vector<double> residuals;  // v − fitted (unweighted)

  // The parameter named `name`, or nullptr.
  const ParameterEstimate* find(std::string_view name) const;
};

// Fits a single-substrate model (one that needs no inhibitor: mm, substrate-inhibition, hill). `weights`
// empty = all 1. Values must be finite, s ≥ 0, weights > 0; UsageError otherwise (and for
// an inhibition model). A fit the data cannot support returns ok = false with a message.
// Points at s = 0 (no-substrate controls) are valid data: every model gives v(0) = 0 for
// any parameters, so they add their v² to the RSS and one degree of freedom each, and leave
// the estimates as they are; the starting values and the count of distinct concentrations
// use s > 0 only. (fit_table leaves them out under relative weighting, 1/v².)
FitResult fit_model(const std::vector<double>& s, const std::vector<double>& v, const std::vector<double>& weights,
                    const KineticModel& model, const FitOptions& options = {});
// Fits any model globally over substrate and inhibitor (inhibitor ≥ 0).
FitResult fit_inhibition(const std::vector<double>& s, const std::vector<double>& inhibitor,
                         const std::vector<double>& v, const std::vector<double>& weights, const KineticModel& model,
                         const FitOptions& options = {});

// kcat = Vmax/[E] and kcat/Km = Vmax/([E]·Km) (Km: the second parameter: Km or K_half) in
// the fit's own units (fit_table reduces them to 1/s and 1/s per M), [E] taken as exact. SE
// by the delta method from the covariance, Wald-t intervals; kcat's profile interval is
// Vmax's divided by [E]; kcat/Km's is the profile-t interval of Vmax/Km in the model refitted
// with θ = (Vmax/Km, Km, …) (for Michaelis–Menten v = (Vmax/Km)·S/(1 + S/Km)) divided by [E].
// The refit needs the points and options of `fit`: s, inhibitor (empty for single-substrate
// models), v, weights (empty = 1). Empty when `fit` is not ok; UsageError for [E] <= 0.
std::vector<ParameterEstimate> turnover(const FitResult& fit, double enzyme_conc, const std::vector<double>& s,
                                        const std::vector<double>& inhibitor, const std::vector<double>& v,
                                        const std::vector<double>& weights, const FitOptions& options = {});

// Student t distribution: P(T ≤ t) and its inverse (regularized incomplete beta by
// continued fraction, then Newton with bisection safeguard). df > 0, 0 < p < 1.
double student_t_cdf(double t, double df);
double student_t_quantile(double p, double df);

// ---- Linearised diagnostics (for plots; never used for the estimate) ----

// One point or one point of the fitted curve in the three classic coordinate systems:
// Lineweaver–Burk (1/S, 1/v), Hanes–Woolf (S, S/v), Eadie–Hofstee (v/S, v). For a `point`
// row v is the observed rate; for a `curve` row v is the fitted model rate at S, so the
// curve rows trace the line implied by the nonlinear estimate (straight for Michaelis–Menten).
struct DiagnosticRow {
  bool curve = false;
  double s = NAN;
  double inhibitor = NAN;  // NaN for single-substrate models
  double v = NAN;
  double fitted = NAN;    // model at (S, I)
  double residual = NAN;  // v − fitted (points only)
  double weight = NAN;    // points only
  double inv_s = NAN, inv_v = NAN, s_over_v = NAN, v_over_s = NAN;
};

// Points (in input order) then, per inhibitor level, `curve_points` curve rows spaced
// geometrically from the smallest to the largest positive S. `fit` must be ok.
std::vector<DiagnosticRow> diagnostics(const std::vector<double>& s, const std::vector<double>& inhibitor,
                                       const std::vector<double>& v, const std::vector<double>& weights,
                                       const FitResult& fit, int curve_points = 41);

// ---- Fitting a rates or summary table, group by group ----

struct FitTableOptions {
  std::string x_column;                                              // substrate concentration (required)
  std::string y_column;                                              // rate; empty = "v0", else "v0_mean" if present
  std::vector<std::string> group_columns;                            // fit each combination of values separately
  std::vector<const KineticModel*> models = {&kinetic_model("mm")};  // registered models
  std::string inhibitor_column;                                      // required by the inhibition models
  std::string enzyme_column;                                         // when set: kcat and kcat/Km per fit
  bool kcat_per_min = false;  // kcat in 1/min and kcat/Km in 1/min per M (default 1/s, 1/s per M)
  Weighting weighting = Weighting::none;
  std::string sd_column;         // replicate-sd: SD column; empty = "<y>_sd" or
                                 // "<stem>_sd" for "<stem>_mean"; else replicate SDs
  bool include_flagged = false;  // also use rows whose `flags` cell is not empty
  std::string role = "sample";   // rows kept when a `role` column exists; "" = all
  // Units known from outside the table (`vzero fit` reads them from the datapackage.json
  // beside it), by column name; used for a column whose unit the table does not give.
  std::map<std::string, std::string> column_units;
  FitOptions fit;
  // Empty if valid, else e.g. "x_column is empty; name the substrate column".
  std::string validate() const;
};

// One group × model.
struct GroupFit {
  std::vector<std::string> group_values;  // parallel to TableFit::group_columns
  const KineticModel* model = nullptr;
  FitResult result;                              // ok = false when the group cannot be fitted
  std::vector<ParameterEstimate> derived;        // kcat, kcat/Km (enzyme_column set, fit ok)
  std::vector<double> s, inhibitor, v, weights;  // the points used (inhibitor empty if unused)
  std::vector<int> lines;                        // source line of each point
  double enzyme_conc = NAN;
  std::vector<std::string> units;  // per parameter (by its unit role: v's, x's, the
                                   // inhibitor's, "1"), then per derived; "" = not given
};

struct TableFit {
  std::string source;
  std::vector<std::string> group_columns;
  std::string x_column, y_column, inhibitor_column, enzyme_column, sd_column;  // as used
  Weighting weighting = Weighting::none;
  std::string v_unit, x_unit, inhibitor_unit, enzyme_unit;  // "" = not given by the table
  int rows_read = 0, rows_used = 0, rows_flagged = 0, rows_other_role = 0, rows_missing = 0;
  std::vector<GroupFit> fits;      // groups in first-seen order, models in given order
  std::vector<std::string> notes;  // e.g. "skipped 3 rows with an empty v0 cell"
};

// Reads the points from `table` (role and flags filters), groups them and fits every model.
// Throws InputError naming file:line:column for a missing column or a bad cell; a group that
// cannot be fitted gets a GroupFit with ok = false and a message.
TableFit fit_table(const Table& table, const FitTableOptions& options);

// Tidy CSV: one row per group × model × parameter (a failed fit: one row, empty numbers,
// its message). Columns: <group columns>, model, parameter, estimate, se, ci_low, ci_high,
// profile_low, profile_high, unit, n, df, rss, residual_sd, aic, converged, iterations,
// weighting, message.
std::string fit_csv(const TableFit& fit);
// Its columns as the Table Schema describes them (same order as the header).
std::vector<FieldSpec> fit_fields(const TableFit& fit);
// The same and more (covariance, correlation, starts, formulas, options) as JSON.
std::string fit_json(const TableFit& fit, const FitTableOptions& options);
// Long table of diagnostics rows for every ok fit: <group columns>, model, kind, s,
// inhibitor, v, fitted, residual, weight, inv_s, inv_v, s_over_v, v_over_s.
std::string fit_diagnostics_csv(const TableFit& fit);
std::vector<FieldSpec> fit_diagnostics_fields(const TableFit& fit);
// Short human-readable summary.
std::string fit_text(const TableFit& fit);

}  // namespace vzero
