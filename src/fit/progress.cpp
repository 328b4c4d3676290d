// The global progress-curve fit: parameters, starting values, Levenberg–Marquardt, standard
// errors, Wald-t and profile-t intervals, and the choice between the two rate laws.
#include <fmt/format.h>
#include <Eigen/Cholesky>
#include <algorithm>
#include <cmath>

#include "fit/progress_model.hpp"
#include "vzero/error.hpp"
#include "vzero/progress.hpp"

namespace vzero {

std::string ProgressOptions::validate() const {
  if (!std::isfinite(lead_s)) return fmt::format("lead_s is {}; give a finite lead in seconds", lead_s);
  if (max_iterations < 1) return fmt::format("max_iterations is {}; it must be at least 1", max_iterations);
  if (!(confidence > 0 && confidence < 1))
    return fmt::format("confidence is {}; it must lie strictly between 0 and 1", confidence);
  for (double s : start)
    if (!(s > 0) || !std::isfinite(s)) return fmt::format("start holds {}; every starting value must be > 0", s);
  return {};
}

const ParameterEstimate* ProgressFit::find(std::string_view name) const {
  for (const auto& p : parameters)
    if (p.name == name) return &p;
  return nullptr;
}

namespace {

// θ = [ln Km, ln V_1 … ln V_L, (ln Kp), (lead_s), b_1 … b_W]; V is Vmax or kcat, per minute;
// L = 1 unless Vmax is fitted per enzyme level (levels ascending).
struct Layout {
  bool pi = false, lead = false, enzyme = false;
  Eigen::Index kp = -1, lead_at = -1, offsets = 2;
  std::vector<double> levels;        // per-level Vmax: the enzyme levels
  std::vector<Eigen::Index> v_at;    // per well: θ index of its V
  std::size_t shared() const { return static_cast<std::size_t>(offsets); }
};

Layout layout_of(const ProgressOptions& o, const std::vector<ProgressWell>& wells) {
  Layout l;
  l.pi = o.product_inhibition, l.lead = o.fit_lead, l.enzyme = o.use_enzyme;
  if (o.vmax_per_level) {
    for (const auto& w : wells)
      if (std::find(l.levels.begin(), l.levels.end(), w.enzyme) == l.levels.end()) l.levels.push_back(w.enzyme);
    std::sort(l.levels.begin(), l.levels.end());
    l.offsets = 1 + static_cast<Eigen::Index>(std::max<std::size_t>(1, l.levels.size()));
  }
  for (const auto& w : wells) {
    const auto at = std::find(l.levels.begin(), l.levels.end(), w.enzyme);
    l.v_at.push_back(at == l.levels.end() ? 1 : 1 + (at - l.levels.begin()));
  }
  if (l.pi) l.kp = l.offsets++;
  if (l.lead) l.lead_at = l.offsets++;
  return l;
}

// The residual function (model − data) over every read of every well.
detail::ResidualFn residual_fn(const std::vector<ProgressWell>& wells, const Layout& l, double lead_fixed_s) {
  return [&wells, l, lead_fixed_s](const Eigen::VectorXd& th, Eigen::VectorXd& r, Eigen::MatrixXd* jac) {
    const double km = std::exp(th(0)), kp = l.pi ? std::exp(th(l.kp)) : INFINITY;
    const double lead = l.lead ? th(l.lead_at) : lead_fixed_s;
    Eigen::Index n = 0;
    for (const auto& w : wells) n += static_cast<Eigen::Index>(w.p.size());
    r.resize(n);
    if (jac) jac->setZero(n, l.offsets + static_cast<Eigen::Index>(wells.size()));
    Eigen::Index k = 0;
    for (std::size_t w = 0; w < wells.size(); ++w) {
      const ProgressWell& pw = wells[w];
      const double a = l.pi ? km * (1 + pw.s0 / kp) : km, b = l.pi ? 1 - km / kp : 1.0;
      const double v = std::exp(th(l.v_at[w])), vw = l.enzyme ? v * pw.enzyme : v;
      const double offset = th(l.offsets + static_cast<Eigen::Index>(w));
      for (std::size_t i = 0; i < pw.p.size(); ++i, ++k) {
        const detail::ProgressPoint p = detail::progress_point((pw.t_s[i] + lead) / 60, pw.s0, a, b, vw);
        r(k) = pw.s0 - p.s + offset - pw.p[i];
        if (!std::isfinite(r(k))) return false;
        if (!jac) continue;
        auto& j = *jac;
        const double da_dkm = l.pi ? 1 + pw.s0 / kp : 1.0, db_dkm = l.pi ? -1 / kp : 0.0;
        j(k, 0) = -(p.ds_da * da_dkm + p.ds_db * db_dkm) * km;
        j(k, l.v_at[w]) = -p.ds_dv * vw;
        if (l.pi) j(k, l.kp) = -(p.ds_da * (-km * pw.s0 / (kp * kp)) + p.ds_db * (km / (kp * kp))) * kp;
        if (l.lead) j(k, l.lead_at) = -p.ds_dtau / 60;
        j(k, l.offsets + static_cast<Eigen::Index>(w)) = 1;
      }
    }
    return true;
  };
}

// Initial slope (per minute) of a well from its first reads (least squares over up to 5).
double initial_slope(const ProgressWell& w) {
  const std::size_t m = std::min<std::size_t>(5, w.p.size());
  double st = 0, sp = 0;
  for (std::size_t i = 0; i < m; ++i) st += w.t_s[i] / 60, sp += w.p[i];
  st /= static_cast<double>(m), sp /= static_cast<double>(m);
  double num = 0, den = 0;
  for (std::size_t i = 0; i < m; ++i) {
    num += (w.t_s[i] / 60 - st) * (w.p[i] - sp);
    den += (w.t_s[i] / 60 - st) * (w.t_s[i] / 60 - st);
  }
  return den > 0 ? num / den : 0.0;
}

// Starting θ for Km, V (and the offsets: each well's first read less the model there).
std::vector<Eigen::VectorXd> starts(const std::vector<ProgressWell>& wells, const Layout& l, const ProgressOptions& o) {
  std::vector<double> s0s;
  for (const auto& w : wells) s0s.push_back(w.s0);
  std::sort(s0s.begin(), s0s.end());
  const double s0_mid = s0s[s0s.size() / 2];
  std::vector<std::pair<double, double>> km_v;
  if (!o.start.empty()) {
    km_v.push_back({o.start[0], o.start[1]});
  } else {
    for (double f : {0.25, 1.0, 4.0}) {
      const double km = f * s0_mid;
      std::vector<double> v;  // v0 = V·S0/(Km + S0) → V per well (per unit enzyme with kcat or per level)
      for (const auto& w : wells)
        v.push_back(initial_slope(w) * (km + w.s0) / w.s0 / (l.enzyme || !l.levels.empty() ? w.enzyme : 1.0));
      std::sort(v.begin(), v.end());
      const double vm = v[v.size() / 2];
      if (vm > 0) km_v.push_back({km, vm});
    }
  }
  std::vector<Eigen::VectorXd> out;
  for (auto [km, v] : km_v) {
    Eigen::VectorXd th = Eigen::VectorXd::Zero(l.offsets + static_cast<Eigen::Index>(wells.size()));
    th(0) = std::log(km);
    for (Eigen::Index j = 1; j <= static_cast<Eigen::Index>(std::max<std::size_t>(1, l.levels.size())); ++j)
      th(j) = std::log(l.levels.empty() || !o.start.empty() ? v : v * l.levels[static_cast<std::size_t>(j - 1)]);
    if (l.pi) th(l.kp) = std::log(o.start.size() > 2 ? o.start[2] : 10 * s0s.back());
    if (l.lead) th(l.lead_at) = o.lead_s;
    for (std::size_t w = 0; w < wells.size(); ++w) {
      const ProgressWell& pw = wells[w];
      const double lead = o.lead_s;
      const double vw = std::exp(th(l.v_at[w])) * (l.enzyme ? pw.enzyme : 1.0);
      th(l.offsets + static_cast<Eigen::Index>(w)) =
          pw.p[0] - (pw.s0 - progress_substrate((pw.t_s[0] + lead) / 60, pw.s0, km, vw));
    }
    out.push_back(th);
  }
  return out;
}

}  // namespace
}  // namespace vzero

namespace vzero {
namespace {

// Wells sharing a blank set form one cluster of the robust covariance when there are at least
// this many sets (fewer clusters estimate a covariance too poorly; Cameron & Miller 2015);
// else every well is a cluster of its own.
constexpr int k_min_blank_sets = 5;

// Why these wells cannot give the parameters, or "".
std::string pre_check(const std::vector<ProgressWell>& wells, const Layout& l, std::size_t n) {
  if (wells.empty()) return "no wells to fit";
  for (const auto& w : wells) {
    if (w.t_s.size() != w.p.size()) throw UsageError(fmt::format("fit_progress: well {}: t_s and p differ in length", w.well));
    if (!(w.s0 > 0) || !std::isfinite(w.s0))
      throw UsageError(fmt::format("fit_progress: well {} has s0 = {}; it must be finite and > 0", w.well, w.s0));
    if ((l.enzyme || !l.levels.empty()) && (!(w.enzyme > 0) || !std::isfinite(w.enzyme)))
      throw UsageError(fmt::format("fit_progress: well {} has enzyme = {}; it must be finite and > 0", w.well, w.enzyme));
    for (std::size_t i = 0; i < w.p.size(); ++i)
      if (!std::isfinite(w.t_s[i]) || !std::isfinite(w.p[i]))
        throw UsageError(fmt::format("fit_progress: well {} read {} is not finite", w.well, i));
    if (w.p.size() < 3) return fmt::format("well {} has {} reads; each well needs at least 3", w.well, w.p.size());
  }
  const std::size_t p = l.shared() + wells.size();
  if (n <= p) return fmt::format("too few reads: {} for {} parameters", n, p);
  return {};
}

// Profile-t limit of shared parameter j on one side: the θⱼ where √(RSSⱼ − RSS)/s = cutoff.
double profile_side(const detail::ResidualFn& f, const detail::LsqResult& best, Eigen::Index j, double se_theta,
                    double s, double cutoff, int side, int max_iterations) {
  std::vector<bool> fixed(static_cast<std::size_t>(best.theta.size()), false);
  fixed[static_cast<std::size_t>(j)] = true;
  Eigen::VectorXd warm = best.theta;
  auto tau = [&](double d) -> double {
    Eigen::VectorXd st = warm;
    st(j) = best.theta(j) + side * d;
    const detail::LsqResult r = detail::least_squares(f, st, fixed, max_iterations);
    if (!std::isfinite(r.rss)) return INFINITY;
    warm = r.theta;
    return std::sqrt(std::max(r.rss - best.rss, 0.0)) / s;
  };
  double a = 0, b = std::max(se_theta, 1e-8), tb = tau(b);
  for (int k = 0; k < 30 && tb < cutoff; ++k) a = b, b *= 2, tb = tau(b);
  if (tb < cutoff) return NAN;
  for (int k = 0; k < 60 && b - a > 1e-10 * (1 + b); ++k) {  // bisection on |τ| − cutoff
    const double c = (a + b) / 2, tc = tau(c);
    if (tc < cutoff)
      a = c;
    else
      b = c, tb = tc;
  }
  if (!std::isfinite(tb)) return NAN;
  return best.theta(j) + side * (a + b) / 2;
}

// Estimates, SE (delta method from ln p), Wald-t and profile-t intervals of the shared
// parameters: the wider of the model-based and the cluster-robust interval, the profile-t
// cutoff stretched by the same factor (as a quasi-likelihood profile scales its deviance).
void shared_estimates(ProgressFit& out, const detail::ResidualFn& f, const detail::LsqResult& best,
                      const Eigen::MatrixXd& cov, const Eigen::MatrixXd& cov_cluster, const Layout& l,
                      const ProgressOptions& o) {
  std::vector<std::pair<std::string, Eigen::Index>> names = {{"Km", 0}};
  if (l.levels.empty()) names.push_back({l.enzyme ? "kcat" : "Vmax", 1});
  for (std::size_t k = 0; k < l.levels.size(); ++k)
    names.push_back({fmt::format("Vmax[E={:g}]", l.levels[k]), 1 + static_cast<Eigen::Index>(k)});
  if (l.pi) names.push_back({"Kp", l.kp});
  if (l.lead) names.push_back({"lead_s", l.lead_at});
  for (auto [name, j] : names) {
    const bool log_scale = name != "lead_s";
    ParameterEstimate e;
    e.name = name;
    const double th = best.theta(j), se_model = std::sqrt(cov(j, j)), se_cluster = std::sqrt(cov_cluster(j, j));
    // Half-widths on θ's scale; the cluster one needs G ≥ 2 and a finite SE.
    const double h_model = out.t_quantile * se_model;
    const double h_cluster = std::isfinite(out.t_cluster) && std::isfinite(se_cluster) ? out.t_cluster * se_cluster : 0;
    const bool wider = h_cluster > h_model;
    const double se_th = wider ? se_cluster : se_model, q = wider ? out.t_cluster : out.t_quantile;
    e.estimate = log_scale ? std::exp(th) : th;
    e.se = log_scale ? e.estimate * se_th : se_th;
    e.ci_low = e.estimate - q * e.se;
    e.ci_high = e.estimate + q * e.se;
    const double scale = log_scale ? e.estimate : 1.0;
    out.se_model.push_back(scale * se_model);
    out.se_cluster.push_back(scale * se_cluster);
    out.cluster_wider.push_back(wider);
    if (o.profile && out.residual_sd > 0 && log_scale) {  // the lead: Wald only (its profile has a kink at τ = 0)
      const double cutoff = out.t_quantile * (wider ? h_cluster / h_model : 1.0);
      const double lo = profile_side(f, best, j, se_th, out.residual_sd, cutoff, -1, o.max_iterations);
      const double hi = profile_side(f, best, j, se_th, out.residual_sd, cutoff, 1, o.max_iterations);
      e.profile_low = log_scale ? std::exp(lo) : lo;
      e.profile_high = log_scale ? std::exp(hi) : hi;
    }
    out.parameters.push_back(e);
  }
}

void fill_fit(ProgressFit& out, const std::vector<ProgressWell>& wells, const detail::ResidualFn& f,
              const detail::LsqResult& best, const Layout& l, const ProgressOptions& o) {
  const auto p = static_cast<int>(best.theta.size());
  out.converged = best.converged;
  out.iterations = best.iterations;
  out.rss = best.rss;
  out.df = out.n - p;
  out.residual_sd = std::sqrt(out.rss / out.df);
  out.t_quantile = student_t_quantile(1 - (1 - o.confidence) / 2, out.df);
  out.aic = out.n * (std::log(2 * M_PI) + 1 - std::log(out.n) + std::log(out.rss)) + 2 * (p + 1);
  const Eigen::MatrixXd jtj = best.jac.transpose() * best.jac;
  Eigen::LDLT<Eigen::MatrixXd> ldlt(jtj);
  const Eigen::MatrixXd cov = out.residual_sd * out.residual_sd *
                              ldlt.solve(Eigen::MatrixXd::Identity(jtj.rows(), jtj.cols()));
  std::vector<std::string> keys;
  for (const auto& w : wells) keys.push_back(w.cluster);
  std::vector<int> of_well, of_row, well_row;
  out.clusters = detail::well_clusters(keys, k_min_blank_sets, of_well, out.cluster_by);
  for (std::size_t w = 0; w < wells.size(); ++w) {
    of_row.insert(of_row.end(), wells[w].p.size(), of_well[w]);
    well_row.insert(well_row.end(), wells[w].p.size(), static_cast<int>(w));
  }
  out.t_cluster = out.clusters >= 2 ? student_t_quantile(1 - (1 - o.confidence) / 2, out.clusters - 1) : NAN;
  // CR3 (close to the jackknife over clusters); CR1 when a cluster alone determines a parameter.
  Eigen::MatrixXd cov_cluster = Eigen::MatrixXd::Constant(cov.rows(), cov.cols(), NAN);
  if (out.clusters >= 2) {
    cov_cluster = detail::cluster_covariance_cr3(best.jac, best.r, l.offsets, well_row, of_row, out.clusters);
    out.cluster_formula = "CR3";
    if (cov_cluster.size() == 0) {
      cov_cluster = detail::cluster_covariance(best.jac, best.r, of_row, out.clusters);
      out.cluster_formula = "CR1";
    }
  }
  shared_estimates(out, f, best, cov, cov_cluster, l, o);
  Eigen::Index k = 0;
  for (std::size_t w = 0; w < wells.size(); ++w) {
    const Eigen::Index j = l.offsets + static_cast<Eigen::Index>(w);
    ParameterEstimate e;
    e.name = wells[w].well;
    e.estimate = best.theta(j);
    e.se = std::sqrt(cov(j, j));
    e.ci_low = e.estimate - out.t_quantile * e.se;
    e.ci_high = e.estimate + out.t_quantile * e.se;
    out.offsets.push_back(e);
    out.fitted.emplace_back(), out.residuals.emplace_back();
    for (std::size_t i = 0; i < wells[w].p.size(); ++i, ++k) {
      out.residuals.back().push_back(-best.r(k));
      out.fitted.back().push_back(wells[w].p[i] + best.r(k));
    }
  }
}

}  // namespace

ProgressFit fit_progress(const std::vector<ProgressWell>& wells, const ProgressOptions& o) {
  if (auto why = o.validate(); !why.empty()) throw UsageError("ProgressOptions: " + why);
  if (o.vmax_per_level && o.use_enzyme)
    throw UsageError("ProgressOptions: vmax_per_level and use_enzyme exclude each other (Vmax per level or kcat)");
  const Layout l = layout_of(o, wells);
  if (!o.start.empty() && o.start.size() != (l.pi ? 3u : 2u))
    throw UsageError(fmt::format("ProgressOptions: start has {} values; give Km, {}{}", o.start.size(),
                                 l.enzyme ? "kcat" : "Vmax", l.pi ? ", Kp" : ""));
  ProgressFit out;
  out.model = l.pi ? "mm-product-inhibition" : "mm";
  for (const auto& w : wells) out.n += static_cast<int>(w.p.size());
  if (out.message = pre_check(wells, l, static_cast<std::size_t>(out.n)); !out.message.empty()) return out;
  const detail::ResidualFn f = residual_fn(wells, l, o.lead_s);
  const std::vector<bool> none(l.shared() + wells.size(), false);
  // An RSS below 1e-20 of Σ p² (residuals ~1e-10 of the data) is an exact fit: its relative
  // offset is rounding and integration error, not a distance from the optimum.
  double exact = 0;
  for (const auto& w : wells)
    for (double p : w.p) exact += 1e-20 * p * p;
  detail::LsqResult best;
  for (const Eigen::VectorXd& st : starts(wells, l, o)) {
    detail::LsqResult run = detail::least_squares(f, st, none, o.max_iterations, exact);
    if (std::isfinite(run.rss) && (!std::isfinite(best.rss) || (run.converged && !best.converged) ||
                                   (run.converged == best.converged && run.rss < best.rss * (1 - 1e-12))))
      best = std::move(run);
  }
  if (!std::isfinite(best.rss)) {
    out.message = "no starting values: the first reads of the wells give no positive initial rate";
    return out;
  }
  double s0_max = 0;
  for (const auto& w : wells) s0_max = std::max(s0_max, w.s0);
  if (l.pi && std::exp(best.theta(l.kp)) > 1e3 * s0_max) {
    out.message = fmt::format("Kp runs above 1000 × the highest S0 ({}): the curves show no product inhibition",
                              s0_max);
    out.rss = best.rss;
    return out;
  }
  fill_fit(out, wells, f, best, l, o);
  for (const auto& e : out.parameters)
    if (!std::isfinite(e.se) || !(e.se > 0 || out.rss == 0)) {
      out.message = fmt::format("{} is not determined by these curves (its standard error is not finite)", e.name);
      return out;
    }
  if (!out.converged) {
    out.message = fmt::format("did not converge in {} iterations: these curves do not determine {}", o.max_iterations,
                              l.lead ? "every shared parameter (try a fixed --lead)" : "every shared parameter");
    return out;
  }
  out.ok = true;
  return out;
}

ModelChoice compare_progress_models(const ProgressFit& mm, const ProgressFit& pi) {
  ModelChoice c;
  c.aic_mm = mm.aic, c.aic_pi = pi.aic;
  if (!mm.ok) {
    c.verdict = "no comparison: the Michaelis–Menten fit failed";
    return c;
  }
  if (!pi.ok) {
    c.verdict = "Michaelis–Menten: the product-inhibition fit adds nothing (" + pi.message + ")";
    return c;
  }
  c.statistic = std::max(mm.n * std::log(mm.rss / pi.rss), 0.0);
  c.p_value = std::erfc(std::sqrt(c.statistic / 2));  // χ² with 1 df
  const bool lr = c.p_value < 0.05, aic = pi.aic < mm.aic;
  if (lr && aic)
    c.verdict = fmt::format(
        "product inhibition: it lowers AIC by {:.1f} and the likelihood-ratio test rejects plain "
        "Michaelis–Menten (χ² = {:.2f}, 1 df, p = {:.2g})",
        mm.aic - pi.aic, c.statistic, c.p_value);
  else if (!lr && !aic)
    c.verdict = fmt::format(
        "Michaelis–Menten: product inhibition does not lower AIC ({:+.1f}) and the likelihood-ratio test "
        "does not call for it (χ² = {:.2f}, 1 df, p = {:.2g})",
        pi.aic - mm.aic, c.statistic, c.p_value);
  else
    c.verdict = fmt::format(
        "undecided: AIC {} product inhibition ({:+.1f}) but the likelihood-ratio test gives p = {:.2g}; "
        "measure longer or at more substrate levels",
        aic ? "favours" : "does not favour", pi.aic - mm.aic, c.p_value);
  return c;
}

}  // namespace vzero
