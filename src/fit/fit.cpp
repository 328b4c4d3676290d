// The kinetics fit of one set of points: checks, the Levenberg–Marquardt runs, standard
// errors, intervals, and the messages for fits the data cannot support.
#include "vzero/fit.hpp"

#include <fmt/format.h>
#include <Eigen/QR>
#include <algorithm>
#include <cmath>
#include <set>

#include "fit/fit_models.hpp"
#include "vzero/error.hpp"

namespace vzero {

std::string FitOptions::validate() const {
  if (max_iterations < 1) return fmt::format("max_iterations is {}; it must be at least 1", max_iterations);
  if (!(tolerance > 0 && tolerance < 1)) return fmt::format("tolerance is {}; it must lie between 0 and 1", tolerance);
  if (!(confidence > 0 && confidence < 1))
    return fmt::format("confidence is {}; it must lie strictly between 0 and 1", confidence);
  for (double e : start)  // > 0 on the log scale: checked against the model (fit_points)
    if (!std::isfinite(e)) return fmt::format("start holds {}; every starting value must be finite", e);
  return {};
}

const ParameterEstimate* FitResult::find(std::string_view name) const {
  for (const auto& p : parameters)
    if (p.name == name) return &p;
  return nullptr;
}

namespace detail {
FitPoints make_points(std::string_view fn, const std::vector<double>& s, const std::vector<double>* inh,
                      const std::vector<double>& v, const std::vector<double>& w) {
  if (s.size() != v.size() || (inh && inh->size() != v.size()) || (!w.empty() && w.size() != v.size()))
    throw UsageError(fmt::format("{}: s, inhibitor, v and weights must have the same length (s {}, v {}, weights {})",
                                 fn, s.size(), v.size(), w.size()));
  FitPoints pts;
  pts.s = s;
  pts.v = v;
  pts.i = inh ? *inh : std::vector<double>(v.size(), 0.0);
  pts.w = w.empty() ? std::vector<double>(v.size(), 1.0) : w;
  for (std::size_t k = 0; k < v.size(); ++k) {
    if (!std::isfinite(s[k]) || s[k] < 0 || !std::isfinite(pts.i[k]) || pts.i[k] < 0)
      throw UsageError(fmt::format("{}: point {} has s = {}, inhibitor = {}; concentrations must be finite and >= 0",
                                   fn, k, s[k], pts.i[k]));
    if (!std::isfinite(v[k]))
      throw UsageError(fmt::format("{}: point {} has v = {}; rates must be finite", fn, k, v[k]));
    if (!(pts.w[k] > 0) || !std::isfinite(pts.w[k]))
      throw UsageError(fmt::format("{}: point {} has weight {}; weights must be finite and > 0", fn, k, pts.w[k]));
    pts.sqrt_w.push_back(std::sqrt(pts.w[k]));
  }
  return pts;
}
}  // namespace detail

namespace {

std::string join(const std::vector<std::string>& v) {
  std::string out;
  for (const auto& e : v) {
    if (!out.empty()) out += ", ";
    out += e;
  }
  return out;
}

// {:g} with 6 significant digits, for messages.
std::string num(double x) { return fmt::format("{:.6g}", x); }

// Why these points cannot give the model's parameters, or "" when they can.
std::string pre_check(const KineticModel& m, const detail::FitPoints& pts, std::size_t p) {
  const auto names = m.parameter_names();
  const std::size_t n = pts.size();
  if (n == 0) return "no points to fit";
  if (n < p + 1)
    return fmt::format("too few points: {} for {} parameters ({}); at least {} are needed", n, p, join(names), p + 1);
  std::set<double> s_all(pts.s.begin(), pts.s.end()), s_pos;
  if (m.dose_response && s_all.size() < p)  // x = 0 (no inhibitor) is a level of the curve: its top
    return fmt::format(
        "only {} different inhibitor concentrations for {} fitted parameters of the {} model; a dose-response "
        "curve needs at least {}",
        s_all.size(), p, m.name, p);
  for (double s : pts.s)
    if (s > 0) s_pos.insert(s);
  const std::size_t need = m.substrate_levels_needed();
  if (!m.dose_response && s_all.size() == 1)
    return fmt::format(
        "all {} points have the same substrate concentration ({}); a saturation curve needs at least {} "
        "different concentrations",
        n, num(*s_all.begin()), need);
  if (!m.dose_response && s_pos.size() < need)
    return fmt::format("only {} different positive substrate concentrations for the {} model; at least {} are needed",
                       s_pos.size(), m.name, need);
  if (m.needs_inhibitor()) {
    std::set<double> i_all(pts.i.begin(), pts.i.end());
    if (i_all.size() == 1)
      return fmt::format(
          "all {} points have the same inhibitor concentration ({}); the {} model needs at least 2 "
          "inhibitor levels",
          n, num(*i_all.begin()), m.name);
    std::set<std::pair<double, double>> cells;
    for (std::size_t k = 0; k < n; ++k)
      if (pts.s[k] > 0) cells.insert({pts.s[k], pts.i[k]});
    if (cells.size() < p)
      return fmt::format(
          "only {} different (substrate, inhibitor) combinations for {} parameters ({}); at least {} are "
          "needed",
          cells.size(), p, join(names), p);
  }
  const double v_max = *std::max_element(pts.v.begin(), pts.v.end());
  if (!(v_max > 0))
    return fmt::format(
        "no positive rate: all {} rates are <= 0 (the largest is {}); check the reaction direction and "
        "the blank subtraction",
        n, num(v_max));
  return {};
}

// What a parameter stuck at its search bound means, in the data's terms.
std::string bound_message(const KineticModel& m, std::size_t j, int side, const detail::FitPoints& pts,
                          const std::vector<double>& p) {
  const std::string& name = m.parameters[j].name;
  const double s_max = *std::max_element(pts.s.begin(), pts.s.end());
  auto generic = [&] {
    if (side > 0 && !m.parameters[j].runaway.empty()) return m.parameters[j].runaway;
    return fmt::format("{} runs to its {} search bound ({}); the data do not determine it", name,
                       side < 0 ? "lower" : "upper", num(p[j]));
  };
  if (m.dose_response) return generic();  // parameter 1 is no substrate constant
  if (j == 1 && side > 0)
    return fmt::format(
        "no curvature: the rates rise in proportion to substrate up to the highest concentration ({}), "
        "so {} and Vmax run off to infinity together and only Vmax/{} = {} is determined; measure at "
        "concentrations above {}",
        num(s_max), name, name, num(p[0] / p[1]), name);
  if (j == 1 && side < 0) {
    double s_min = INFINITY;
    for (double s : pts.s)
      if (s > 0) s_min = std::min(s_min, s);
    return fmt::format(
        "{} runs to 0: the rates do not rise with substrate, already saturated at the lowest "
        "concentration ({}); measure at lower concentrations",
        name, num(s_min));
  }
  return generic();
}

void add_warnings(FitResult& r, const KineticModel& m, const detail::FitPoints& pts, bool profiled,
                  const std::vector<bool>& fixed) {
  const double s_max = *std::max_element(pts.s.begin(), pts.s.end());
  const double i_max = *std::max_element(pts.i.begin(), pts.i.end());
  double s_min = INFINITY;
  for (double s : pts.s)
    if (s > 0) s_min = std::min(s_min, s);
  for (std::size_t j = 0; j < r.parameters.size(); ++j)
    if (fixed[j])
      r.warnings.push_back(
          fmt::format("{} fixed at {} (not estimated)", r.parameters[j].name, num(r.parameters[j].estimate)));
  for (std::size_t j = 1; j < r.parameters.size(); ++j) {
    const auto& e = r.parameters[j];
    const UnitRole role = m.parameters[j].unit_role;
    if (fixed[j] || (role != UnitRole::substrate && role != UnitRole::inhibitor))
      continue;  // no concentration to compare
    if (m.dose_response && e.estimate < s_min / 10)
      r.warnings.push_back(
          fmt::format("{} ({}) is below a tenth of the lowest inhibitor concentration ({}): an "
                      "extrapolation",
                      e.name, num(e.estimate), num(s_min)));
    const bool inhibitor_constant = role == UnitRole::inhibitor;
    const double top = inhibitor_constant ? i_max : s_max;
    if (e.estimate > 10 * top)
      r.warnings.push_back(fmt::format("{} ({}) is above 10 times the highest {} concentration ({}): an extrapolation",
                                       e.name, num(e.estimate),
                                       inhibitor_constant || m.dose_response ? "inhibitor" : "substrate", num(top)));
  }
  for (std::size_t j = 0; j < r.parameters.size(); ++j) {
    const auto& e = r.parameters[j];
    if (!profiled) break;
    if (fixed[j]) continue;
    if (std::isnan(e.profile_low) && r.residual_sd > 0)
      r.warnings.push_back(
          fmt::format("the profile interval of {} has no lower limit inside the search bounds", e.name));
    if (std::isnan(e.profile_high) && r.residual_sd > 0)
      r.warnings.push_back(
          fmt::format("the profile interval of {} has no upper limit inside the search bounds", e.name));
  }
}

// Covariance s²·(JᵀWJ)⁻¹ over the fitted parameters (a held one has variance 0), the
// estimates, their intervals and the fit's statistics; "" or why there are none.
std::string finish_fit(FitResult& r, const KineticModel& m, const detail::FitPoints& pts, const detail::LmResult& best,
                       const detail::Bounds& bounds, const std::vector<bool>& fixed, const FitOptions& options) {
  const auto names = m.parameter_names();
  const std::size_t np = names.size();
  std::vector<Eigen::Index> free;
  for (std::size_t j = 0; j < np; ++j)
    if (!fixed[j]) free.push_back(static_cast<Eigen::Index>(j));
  const Eigen::MatrixXd full = detail::natural_jacobian(m, pts, best.p);
  const auto nf = static_cast<Eigen::Index>(free.size());
  Eigen::MatrixXd jac(full.rows(), nf);
  for (Eigen::Index c = 0; c < nf; ++c) jac.col(c) = full.col(free[static_cast<std::size_t>(c)]);
  Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(jac);
  if (qr.rank() < nf)
    return fmt::format("the parameters cannot be told apart at the optimum (the Jacobian has rank {} of {})", qr.rank(),
                       nf);
  const Eigen::MatrixXd rr = qr.matrixR().topLeftCorner(nf, nf).triangularView<Eigen::Upper>();
  const Eigen::MatrixXd r_inv = rr.triangularView<Eigen::Upper>().solve(Eigen::MatrixXd::Identity(nf, nf));
  const Eigen::MatrixXd unscaled =
      qr.colsPermutation() * (r_inv * r_inv.transpose()) * qr.colsPermutation().transpose();
  r.ok = true;
  r.rss = best.rss;
  r.residual_sd = std::sqrt(best.rss / r.df);
  const auto p_idx = static_cast<Eigen::Index>(np);
  r.covariance = Eigen::MatrixXd::Zero(p_idx, p_idx);
  for (Eigen::Index a = 0; a < nf; ++a)
    for (Eigen::Index b = 0; b < nf; ++b)
      r.covariance(free[static_cast<std::size_t>(a)], free[static_cast<std::size_t>(b)]) =
          unscaled(a, b) * (best.rss / r.df);
  r.correlation = Eigen::MatrixXd::Identity(p_idx, p_idx);  // a held parameter: uncorrelated
  for (Eigen::Index a : free)
    for (Eigen::Index b : free)
      r.correlation(a, b) = r.covariance(a, b) / std::sqrt(r.covariance(a, a) * r.covariance(b, b));
  r.t_quantile = student_t_quantile(1 - (1 - options.confidence) / 2, r.df);
  double sum_log_w = 0;
  for (double w : pts.w) sum_log_w += std::log(w);
  if (best.rss > 0)
    r.aic = r.n * (std::log(2 * M_PI) + 1 - std::log(r.n) + std::log(best.rss)) - sum_log_w +
            2.0 * static_cast<double>(nf + 1);
  detail::weighted_rss(m, pts, best.p, &r.fitted);
  for (std::size_t k = 0; k < pts.size(); ++k) r.residuals.push_back(pts.v[k] - r.fitted[k]);
  const bool exact = !(r.residual_sd > 0);
  const detail::LmSettings settings{options.max_iterations, options.tolerance};
  for (std::size_t j = 0; j < np; ++j) {
    ParameterEstimate e;
    e.name = names[j];
    e.estimate = best.p[j];
    if (!fixed[j]) {
      e.se = std::sqrt(r.covariance(static_cast<Eigen::Index>(j), static_cast<Eigen::Index>(j)));
      e.ci_low = e.estimate - r.t_quantile * e.se;
      e.ci_high = e.estimate + r.t_quantile * e.se;
      if (exact) {
        e.profile_low = e.profile_high = e.estimate;
      } else if (options.profile) {
        const auto lim =
            detail::profile_limits(m, pts, bounds, best, j, e.se, r.residual_sd, r.t_quantile, settings, fixed);
        e.profile_low = lim.low;
        e.profile_high = lim.high;
      }
    }
    r.parameters.push_back(e);
  }
  add_warnings(r, m, pts, options.profile && !exact, fixed);
  if (exact) r.warnings.push_back("the model passes through every point: residual SD 0, no interval width");
  return {};
}

// The best of the runs from `starts` (converged first, then the lower RSS); -1 when none.
int best_run(const KineticModel& m, const detail::FitPoints& pts, const detail::Bounds& bounds,
             const std::vector<detail::Start>& starts, const std::vector<bool>& fixed,
             const detail::LmSettings& settings, detail::LmResult& best) {
  int chosen = -1;
  for (std::size_t k = 0; k < starts.size(); ++k) {
    detail::LmResult run = detail::levenberg_marquardt(m, pts, bounds, starts[k].p, fixed, settings);
    const bool better = chosen < 0 || (run.converged && !best.converged) ||
                        (run.converged == best.converged && run.rss < best.rss * (1 - 1e-12));
    if (better) best = run, chosen = static_cast<int>(k);
  }
  return chosen;
}

FitResult fit_points(const KineticModel& m, const detail::FitPoints& pts, const FitOptions& options) {
  if (auto why = options.validate(); !why.empty()) throw UsageError("FitOptions: " + why);
  const auto names = m.parameter_names();
  const std::size_t np = names.size();
  if (!options.start.empty() && options.start.size() != np)
    throw UsageError(fmt::format("FitOptions: start has {} values; the {} model has {} parameters ({})",
                                 options.start.size(), m.name, np, join(names)));
  const std::vector<double> held = detail::held_values(m, options);
  std::vector<bool> fixed(np);
  for (std::size_t j = 0; j < np; ++j) fixed[j] = !std::isnan(held[j]);
  const auto n_free = static_cast<std::size_t>(std::count(fixed.begin(), fixed.end(), false));
  FitResult r;
  r.model = &m;
  r.n = static_cast<int>(pts.size());
  r.df = r.n - static_cast<int>(n_free);
  for (std::size_t j = 0; j < np; ++j)
    if (m.parameters[j].known && !fixed[j]) {
      r.message = fmt::format(
          "the {} model needs {} ({}), which it does not fit: give it (vzero fit --fix {}=VALUE, "
          "or --enzyme COLUMN for a plate-map column)",
          m.name, names[j], m.parameters[j].meaning, names[j]);
      return r;
    }
  if (r.message = pre_check(m, pts, n_free); !r.message.empty()) return r;

  const detail::Bounds bounds = detail::parameter_bounds(m, pts);
  std::vector<detail::Start> starts;
  if (!options.start.empty()) {
    starts.push_back({"given", options.start});
    for (std::size_t j = 0; j < np; ++j)
      if (fixed[j]) starts[0].p[j] = held[j];
  } else {
    starts = detail::automatic_starts(m, pts, held);
  }
  const detail::LmSettings settings{options.max_iterations, options.tolerance};
  detail::LmResult best;
  const int chosen = best_run(m, pts, bounds, starts, fixed, settings, best);
  if (chosen < 0) {
    r.message = m.start ? "no starting values: " + m.start_method + " found none"
                        : "no starting values: the linearisations and the grid give no positive Vmax";
    return r;
  }
  r.start_method = starts[static_cast<std::size_t>(chosen)].method;
  r.start = starts[static_cast<std::size_t>(chosen)].p;
  r.iterations = best.iterations;
  r.converged = best.converged;
  r.relative_offset = best.relative_offset;
  // A parameter at its bound explains the fit better than "not converged" does (the run
  // often stalls there). Km (index 1) first: when the rates never level off, Km and Vmax
  // run off together; then Vmax, then the others in order.
  for (std::size_t k = 0; k < np; ++k) {
    const std::size_t j = k < 2 ? 1 - k : k;
    if (best.at_bound[j] != 0) {
      r.message = bound_message(m, j, best.at_bound[j], pts, best.p);
      r.converged = false;  // the run ended on the box, not at an optimum inside it
      return r;
    }
  }
  if (!best.converged) {
    r.message = fmt::format("did not converge in {} iterations (relative offset {}); give other starting values",
                            best.iterations, num(best.relative_offset));
    return r;
  }
  r.message = finish_fit(r, m, pts, best, bounds, fixed, options);
  return r;
}

}  // namespace

FitResult fit_model(const std::vector<double>& s, const std::vector<double>& v, const std::vector<double>& weights,
                    const KineticModel& model, const FitOptions& options) {
  if (model.needs_inhibitor())
    throw UsageError(
        fmt::format("fit_model: the {} model needs inhibitor concentrations; call fit_inhibition", model.name));
  return fit_points(model, detail::make_points("fit_model", s, nullptr, v, weights), options);
}

FitResult fit_inhibition(const std::vector<double>& s, const std::vector<double>& inhibitor,
                         const std::vector<double>& v, const std::vector<double>& weights, const KineticModel& model,
                         const FitOptions& options) {
  return fit_points(model, detail::make_points("fit_inhibition", s, &inhibitor, v, weights), options);
}

}  // namespace vzero
