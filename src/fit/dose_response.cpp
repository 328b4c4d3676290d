// The dose-response models: the four-parameter logistic (IC50 and Hill slope) and the
// Morrison equation for tight-binding inhibitors (Morrison, Biochim. Biophys. Acta 185
// (1969) 269-286). x is the inhibitor concentration, y the rate or % activity.
#include "fit/dose_response.hpp"

#include <fmt/format.h>
#include <Eigen/QR>
#include <algorithm>
#include <cmath>

namespace vzero::detail {

namespace {

using P = std::span<const double>;
using G = std::span<double>;
using V = std::span<const double>;

// Geometric steps over the positive x values, a decade beyond each end.
std::vector<double> x_steps(V x, int count) {
  double lo = INFINITY, hi = 0;
  for (double e : x)
    if (e > 0) lo = std::min(lo, e), hi = std::max(hi, e);
  std::vector<double> out;
  if (!(hi > 0)) return out;
  lo /= 10, hi *= 10;
  for (int k = 0; k < count; ++k) out.push_back(lo * std::pow(hi / lo, static_cast<double>(k) / (count - 1)));
  return out;
}

// Weighted least squares of y − Σ held·column on the free columns; the RSS, or NaN.
double linear_part(const Eigen::MatrixXd& cols, V y, V w, std::vector<double>& p, const std::vector<int>& which) {
  const auto n = static_cast<Eigen::Index>(y.size());
  std::vector<Eigen::Index> free;
  Eigen::VectorXd r(n);
  for (Eigen::Index k = 0; k < n; ++k) r(k) = y[static_cast<std::size_t>(k)];
  for (Eigen::Index c = 0; c < cols.cols(); ++c) {
    const double held = p[static_cast<std::size_t>(which[static_cast<std::size_t>(c)])];
    if (std::isnan(held))
      free.push_back(c);
    else
      r -= held * cols.col(c);
  }
  Eigen::VectorXd sw(n);
  for (Eigen::Index k = 0; k < n; ++k) sw(k) = std::sqrt(w[static_cast<std::size_t>(k)]);
  Eigen::VectorXd fitted = Eigen::VectorXd::Zero(n);
  if (!free.empty()) {
    Eigen::MatrixXd a(n, static_cast<Eigen::Index>(free.size()));
    for (std::size_t c = 0; c < free.size(); ++c) a.col(static_cast<Eigen::Index>(c)) = cols.col(free[c]);
    Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(sw.asDiagonal() * a);
    if (qr.rank() < a.cols()) return NAN;
    const Eigen::VectorXd b = qr.solve(sw.asDiagonal() * r);
    if (!b.allFinite()) return NAN;
    for (std::size_t c = 0; c < free.size(); ++c)
      p[static_cast<std::size_t>(which[static_cast<std::size_t>(free[c])])] = b(static_cast<Eigen::Index>(c));
    fitted = a * b;
  }
  return (sw.asDiagonal() * (r - fitted)).squaredNorm();
}

constexpr double k_hill_grid[] = {0.5, 0.75, 1.0, 1.5, 2.0, 3.0, 4.0};

// 4PL: q = 1/(1 + (x/IC50)^h) written as a logistic in h·ln(x/IC50), so no power overflows.
double fpl_share(double x, double ic50, double h) {
  if (x <= 0) return 1.0;
  const double z = h * std::log(x / ic50);
  return z > 0 ? std::exp(-z) / (1 + std::exp(-z)) : 1 / (1 + std::exp(z));
}

KineticModel four_parameter_logistic() {
  KineticModel m;
  m.name = "4pl";
  m.aliases = {"four-parameter-logistic"};
  m.description = "four-parameter logistic dose-response: IC50 and Hill slope (x inhibitor, y rate or % activity)";
  m.formula = "y = bottom + (top - bottom)/(1 + (x/IC50)^hill)";
  m.dose_response = true;
  KineticParameter bottom{"bottom", UnitRole::rate, "y at saturating inhibitor (the lower plateau)"};
  KineticParameter top{"top", UnitRole::rate, "y without inhibitor (the upper plateau)"};
  bottom.any_sign = top.any_sign = true;
  KineticParameter ic50{"IC50", UnitRole::substrate, "inhibitor concentration half-way between top and bottom"};
  ic50.runaway =
      "IC50 runs off to infinity: y does not fall half-way to the bottom within the concentrations measured; "
      "measure at higher inhibitor concentrations, or fix bottom (--fix bottom=0)";
  KineticParameter hill{"hill", UnitRole::none, "Hill slope: steepness of the fall (1 = one binding site)"};
  hill.lo = 0.05;
  hill.hi = 20.0;
  hill.grid.assign(std::begin(k_hill_grid), std::end(k_hill_grid));
  hill.runaway =
      "the Hill slope runs off to its upper bound: y changes as a step between two neighbouring concentrations, "
      "or not at all; measure between them, or check that the compound inhibits";
  m.parameters = {bottom, top, ic50, hill};
  m.rate = [](P p, double x, double, G g) {
    const double lo = p[0], hi = p[1], ic = p[2], h = p[3];
    const double q = fpl_share(x, ic, h);
    if (!g.empty()) {
      const double slope = x > 0 ? (hi - lo) * q * (1 - q) : 0.0;
      g[0] = 1 - q;
      g[1] = q;
      g[2] = x > 0 ? slope * h / ic : 0.0;
      g[3] = x > 0 ? -slope * std::log(x / ic) : 0.0;
    }
    return lo + (hi - lo) * q;
  };
  // Grid over IC50 × hill with bottom and top solved by weighted least squares (the curve
  // is linear in them).
  m.start_method = "grid (IC50, hill; bottom, top linear)";
  m.start = [](V x, V y, V w, std::vector<double>& p) {
    const std::vector<double> held = p;
    const std::vector<double> ics = std::isnan(held[2]) ? x_steps(x, 21) : std::vector<double>{held[2]};
    const std::vector<double> hills = std::isnan(held[3])
                                          ? std::vector<double>(std::begin(k_hill_grid), std::end(k_hill_grid))
                                          : std::vector<double>{held[3]};
    double best = INFINITY;
    for (double ic : ics) {
      for (double h : hills) {
        std::vector<double> trial = held;
        trial[2] = ic;
        trial[3] = h;
        Eigen::MatrixXd cols(static_cast<Eigen::Index>(x.size()), 2);
        for (std::size_t k = 0; k < x.size(); ++k) {
          const double q = fpl_share(x[k], trial[2], trial[3]);
          cols(static_cast<Eigen::Index>(k), 0) = 1 - q;
          cols(static_cast<Eigen::Index>(k), 1) = q;
        }
        const double rss = linear_part(cols, y, w, trial, {0, 1});
        if (rss < best) best = rss, p = trial;
      }
    }
    return std::isfinite(best);
  };
  return m;
}

// Morrison: the fraction of enzyme free of inhibitor, 1 − 2I/(b + √D) with b = E + I + Ki
// and D = b² − 4EI = (E − I)² + Ki·(Ki + 2E + 2I): the published form with the root's
// difference rationalised (b − √D = 4EI/(b + √D)), so E → 0 does not cancel.
struct MorrisonTerms {
  double f, b, root, den;
};
MorrisonTerms morrison_terms(double e, double i, double ki) {
  const double b = e + i + ki;
  const double root = std::sqrt((e - i) * (e - i) + ki * (ki + 2 * e + 2 * i));
  const double den = b + root;
  return {1 - 2 * i / den, b, root, den};
}

KineticModel morrison() {
  KineticModel m;
  m.name = "morrison";
  m.aliases = {"tight-binding"};
  m.description = "Morrison tight-binding inhibition: enzyme concentration near Ki (x inhibitor, y rate or % activity)";
  m.formula = "y = v0*(1 - ((E + x + Ki_app) - sqrt((E + x + Ki_app)^2 - 4*E*x))/(2*E))";
  m.dose_response = true;
  KineticParameter ki{"Ki_app", UnitRole::substrate, "apparent inhibition constant"};
  ki.runaway =
      "Ki_app runs off to infinity: y does not fall with inhibitor; measure at higher inhibitor "
      "concentrations";
  KineticParameter e{"E", UnitRole::substrate, "active enzyme concentration in the well, in x's unit"};
  e.known = true;
  m.parameters = {{"v0", UnitRole::rate, "y without inhibitor"}, ki, e};
  m.rate = [](P p, double x, double, G g) {
    const double v0 = p[0], k = p[1], en = p[2];
    const MorrisonTerms t = morrison_terms(en, x, k);
    if (!g.empty()) {
      const double c = v0 * 2 * x / (t.den * t.den);
      g[0] = t.f;
      g[1] = c * (1 + t.b / t.root);
      g[2] = c * (1 + (en - x + k) / t.root);
    }
    return v0 * t.f;
  };
  // Grid over Ki_app with v0 solved by weighted least squares (y is proportional to it).
  m.start_method = "grid (Ki_app; v0 linear)";
  m.start = [](V x, V y, V w, std::vector<double>& p) {
    if (std::isnan(p[2])) return false;
    const std::vector<double> held = p;
    double best = INFINITY;
    for (double k : x_steps(x, 41)) {
      std::vector<double> trial = held;
      if (std::isnan(trial[1])) trial[1] = k;
      Eigen::MatrixXd cols(static_cast<Eigen::Index>(x.size()), 1);
      for (std::size_t j = 0; j < x.size(); ++j)
        cols(static_cast<Eigen::Index>(j), 0) = morrison_terms(trial[2], x[j], trial[1]).f;
      const double rss = linear_part(cols, y, w, trial, {0});
      if (rss < best && trial[0] > 0) best = rss, p = trial;
    }
    return std::isfinite(best);
  };
  return m;
}

}  // namespace

std::vector<KineticModel> dose_response_models() { return {four_parameter_logistic(), morrison()}; }

double molar_factor(std::string_view unit) {
  static const std::pair<const char*, double> k_units[] = {{"M", 1.0},   {"mM", 1e-3}, {"uM", 1e-6},  {"µM", 1e-6},
                                                           {"μM", 1e-6}, {"nM", 1e-9}, {"pM", 1e-12}, {"fM", 1e-15}};
  for (const auto& [name, factor] : k_units)
    if (unit == name) return factor;
  return NAN;
}

std::vector<ParameterEstimate> p_ic50(const FitResult& fit, std::string_view x_unit, std::string& why) {
  const ParameterEstimate* ic = fit.ok ? fit.find("IC50") : nullptr;
  if (!ic) return {};
  const double factor = molar_factor(x_unit);
  if (std::isnan(factor)) {
    why = x_unit.empty() ? "pIC50 not given: the unit of x is not known (a unit suffix such as _uM on the column "
                           "name, or a <x>_unit column, gives it)"
                         : fmt::format("pIC50 not given: x is in {}, not a molar unit (M, mM, uM, nM, pM, fM)", x_unit);
    return {};
  }
  auto p = [&](double c) { return std::isfinite(c) && c > 0 ? -std::log10(c * factor) : NAN; };
  ParameterEstimate out{"pIC50", p(ic->estimate), ic->se / (ic->estimate * std::log(10.0))};
  out.ci_low = out.estimate - fit.t_quantile * out.se;
  out.ci_high = out.estimate + fit.t_quantile * out.se;
  out.profile_low = p(ic->profile_high);  // −log10 turns the interval round
  out.profile_high = p(ic->profile_low);
  return {out};
}

}  // namespace vzero::detail
