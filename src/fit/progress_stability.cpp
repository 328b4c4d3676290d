// Selwyn's test of enzyme stability: at one S0, product against [E]·τ must be one curve for
// every enzyme amount; a nested-model F test between one curve per level and one for all.
#include <fmt/format.h>
#include <fmt/ranges.h>
#include <Eigen/QR>
#include <algorithm>
#include <boost/math/distributions/fisher_f.hpp>
#include <cmath>
#include <map>

#include "vzero/progress.hpp"

namespace vzero {

namespace {

constexpr int k_degree = 4;                        // polynomial degree of a curve in u/u_common
constexpr double k_alpha = 0.01;                   // significance of the F test
constexpr double k_ratio_flag = 1.05;              // et_ratio above which a significant test is a loss
constexpr std::size_t k_min_reads = k_degree + 2;  // per well within u_common

struct Read {
  std::size_t well = 0, level = 0;
  double x = 0, p = 0;  // u / u_common, product
  double t = 0;         // read time, s
};

// Least squares of y on X: the RSS and the coefficients; false when X is rank-deficient.
bool solve(const Eigen::MatrixXd& x, const Eigen::VectorXd& y, Eigen::VectorXd& beta, double& rss) {
  Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(x);
  if (qr.rank() < x.cols()) return false;
  beta = qr.solve(y);
  rss = (y - x * beta).squaredNorm();
  return true;
}

// Design of the reduced (one curve), full (one curve per level) or well (one curve per well) model.
enum class Curves { one, per_level, per_well };
Eigen::MatrixXd design(const std::vector<Read>& reads, std::size_t wells, std::size_t levels, Curves c) {
  const auto curves = static_cast<Eigen::Index>(c == Curves::one ? 1 : c == Curves::per_level ? levels : wells);
  Eigen::MatrixXd x = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(reads.size()),
                                            static_cast<Eigen::Index>(wells) + curves * k_degree);
  for (std::size_t i = 0; i < reads.size(); ++i) {
    const auto r = static_cast<Eigen::Index>(i);
    x(r, static_cast<Eigen::Index>(reads[i].well)) = 1;
    const std::size_t curve = c == Curves::one ? 0 : c == Curves::per_level ? reads[i].level : reads[i].well;
    const Eigen::Index at = static_cast<Eigen::Index>(wells) + static_cast<Eigen::Index>(curve) * k_degree;
    double pw = 1;
    for (int d = 0; d < k_degree; ++d) x(r, at + d) = pw *= reads[i].x;
  }
  return x;
}
Eigen::MatrixXd design(const std::vector<Read>& reads, std::size_t wells, std::size_t levels, bool full) {
  return design(reads, wells, levels, full ? Curves::per_level : Curves::one);
}

// Reads taken at one time share an error when the wells subtract one blank (its read noise):
// cov = σ_e²·I + σ_b²·11ᵀ within a time, estimated by moments from the full model's residuals r
// (σ_b² from the products r_i·r_j of different reads at one time, σ_e² = RSS/df2 − σ_b²).
// Whitens y and both designs time by time (subtracts g·mean, g = 1 − √(σ_e²/(σ_e² + m·σ_b²)), m
// reads at that time: generalized least squares) and returns σ_b²/(σ_e² + σ_b²), 0 when none.
double whiten_shared(const std::vector<Read>& reads, const Eigen::VectorXd& r, double s2, Eigen::VectorXd& y,
                     std::vector<Eigen::MatrixXd*> xs) {
  std::map<double, std::vector<Eigen::Index>> at;
  for (std::size_t i = 0; i < reads.size(); ++i) at[reads[i].t].push_back(static_cast<Eigen::Index>(i));
  double cross = 0, pairs = 0;
  for (const auto& [t, idx] : at) {
    double sum = 0, sq = 0;
    for (Eigen::Index i : idx) sum += r(i), sq += r(i) * r(i);
    cross += sum * sum - sq;
    pairs += static_cast<double>(idx.size() * (idx.size() - 1));
  }
  if (!(pairs > 0) || !(cross > 0) || !(s2 > 0)) return 0;
  const double sb2 = std::min(cross / pairs, 0.99 * s2), se2 = s2 - sb2;
  for (const auto& [t, idx] : at) {
    const double m = static_cast<double>(idx.size()), g = 1 - std::sqrt(se2 / (se2 + m * sb2));
    double my = 0;
    for (Eigen::Index i : idx) my += y(i) / m;
    for (Eigen::Index i : idx) y(i) -= g * my;
    for (Eigen::MatrixXd* x : xs) {
      Eigen::RowVectorXd mean = Eigen::RowVectorXd::Zero(x->cols());
      for (Eigen::Index i : idx) mean += x->row(i) / m;
      for (Eigen::Index i : idx) x->row(i) -= g * mean;
    }
  }
  return sb2 / s2;
}

// Product level l's fitted curve makes by x (without the well's intercept).
double curve(const Eigen::VectorXd& beta, std::size_t wells, std::size_t level, double x) {
  const Eigen::Index at = static_cast<Eigen::Index>(wells) + static_cast<Eigen::Index>(level) * k_degree;
  double sum = 0, pw = 1;
  for (int d = 0; d < k_degree; ++d) sum += beta(at + d) * (pw *= x);
  return sum;
}

// The first x in (0, 1] where the curve reaches `target` (scan, then bisection); NaN if none.
double first_reach(const Eigen::VectorXd& beta, std::size_t wells, std::size_t level, double target) {
  constexpr int steps = 400;
  double a = 0;
  for (int k = 1; k <= steps; ++k) {
    double b = static_cast<double>(k) / steps;
    if (curve(beta, wells, level, b) < target) {
      a = b;
      continue;
    }
    for (int it = 0; it < 60; ++it) {
      const double c = (a + b) / 2;
      (curve(beta, wells, level, c) < target ? a : b) = c;
    }
    return (a + b) / 2;
  }
  return NAN;
}

std::string verdict_of(const StabilityTest& t, const std::string& unit) {
  const std::string head = fmt::format("{} enzyme levels (F = {:.3g}, {} and {} df, p = {:.2g})", t.levels.size(), t.f,
                                       t.df1, t.df2, t.p_value);
  const std::string size =
      std::isfinite(t.et_ratio) && t.p_value < k_alpha  // without a difference the ratio is noise
          ? fmt::format("; to make {:.4g}{} product the lowest level needs {:.3f} × the [E]·t of the highest",
                        t.product_level, unit.empty() ? "" : " " + unit + " of", t.et_ratio)
          : "";
  if (t.p_value >= k_alpha)
    return "the curves of product against [E]·t superimpose over " + head + size +
           ": no sign that the enzyme loses activity during the read";
  if (t.unstable)
    return "the curves of product against [E]·t do not superimpose over " + head + size +
           ": the enzyme loses activity during the read (rates fall with time at low enzyme); fit early reads only "
           "or stabilise the enzyme";
  if (t.et_ratio < 1 / k_ratio_flag)
    return "the curves of product against [E]·t do not superimpose over " + head + size +
           ": the low enzyme levels run ahead (activation during the read, or enzyme amounts other than the map's)";
  return "the curves of product against [E]·t differ by little over " + head + size +
         ": significant but within 5 % in [E]·t, not flagged";
}

std::size_t reads_within(const ProgressWell& w, double e, double lead_s, double u_common) {
  std::size_t kept = 0;
  for (double ts : w.t_s) kept += e * (ts + lead_s) / 60 <= u_common * (1 + 1e-12);
  return kept;
}

// The [E]·τ every well reaches, after leaving out (into `left_out`) each well with fewer than
// k_min_reads reads up to it, one at a time (a level far above the lowest, or a well whose
// trusted reads start late); NaN when fewer than two levels remain.
double settle_levels(const std::vector<ProgressWell>& wells, std::map<double, std::vector<std::size_t>>& by_level,
                     double lead_s, std::vector<std::string>& left_out) {
  while (by_level.size() >= 2) {
    double u_common = INFINITY;
    for (const auto& [e, idx] : by_level)
      for (std::size_t w : idx) {
        double u_max = -INFINITY;
        for (double ts : wells[w].t_s) u_max = std::max(u_max, e * (ts + lead_s) / 60);
        u_common = std::min(u_common, u_max);
      }
    if (!(u_common > 0)) return NAN;
    bool dropped = false;
    for (auto it = by_level.begin(); it != by_level.end() && !dropped; ++it)
      for (auto w = it->second.begin(); w != it->second.end(); ++w) {
        const std::size_t kept = reads_within(wells[*w], it->first, lead_s, u_common);
        if (kept >= k_min_reads) continue;
        left_out.push_back(fmt::format("{} ({} reads)", wells[*w].well, kept));
        it->second.erase(w);
        if (it->second.empty()) by_level.erase(it);
        dropped = true;
        break;
      }
    if (!dropped) return u_common;
  }
  return NAN;
}

// The test at one S0: wells[idx], by enzyme level (ascending).
StabilityTest one_test(const std::vector<ProgressWell>& wells, double s0,
                       std::map<double, std::vector<std::size_t>> by_level, double lead_s, const std::string& unit) {
  StabilityTest t;
  t.s0 = s0;
  t.u_common = settle_levels(wells, by_level, lead_s, t.left_out);
  if (!(t.u_common > 0)) {
    t.verdict = fmt::format(
        "not tested: fewer than two enzyme levels keep {} reads up to the [E]·t every level reaches{}; read the "
        "lowest enzyme level longer or use closer enzyme levels",
        k_min_reads, t.left_out.empty() ? "" : " (short: " + fmt::format("{}", fmt::join(t.left_out, ", ")) + ")");
    return t;
  }
  std::vector<std::size_t> order;  // wells of the test, level by level
  std::vector<Read> reads;
  std::size_t level = 0;
  for (const auto& [e, idx] : by_level) {
    t.levels.push_back({e, static_cast<int>(idx.size()), 0, NAN});
    for (std::size_t w : idx) {
      t.wells.push_back(wells[w].well);
      for (std::size_t i = 0; i < wells[w].p.size(); ++i) {
        const double u = e * (wells[w].t_s[i] + lead_s) / 60;
        if (u > t.u_common * (1 + 1e-12)) continue;
        reads.push_back({order.size(), level, u / t.u_common, wells[w].p[i], wells[w].t_s[i]});
        ++t.levels[level].reads;
      }
      order.push_back(w);
    }
    ++level;
  }
  Eigen::VectorXd y(static_cast<Eigen::Index>(reads.size()));
  for (std::size_t i = 0; i < reads.size(); ++i) y(static_cast<Eigen::Index>(i)) = reads[i].p;
  Eigen::VectorXd b_full, b_red;
  double rss_full = NAN, rss_red = NAN, rss_error = NAN;  // rss_error: the F test's error term
  const std::size_t nw = order.size(), nl = t.levels.size();
  const auto n = static_cast<int>(reads.size());
  t.df1 = static_cast<int>((nl - 1) * k_degree);
  t.df2 = n - static_cast<int>(nw + nl * k_degree);
  if (t.df2 < 1 || !solve(design(reads, nw, nl, true), y, b_full, rss_full) ||
      !solve(design(reads, nw, nl, false), y, b_red, rss_red)) {
    t.verdict = "not tested: the reads up to the common [E]·t do not determine one curve per enzyme level";
    return t;
  }
  t.tested = true;
  for (std::size_t w = 0; w < nw; ++w) t.intercepts.push_back(b_full(static_cast<Eigen::Index>(w)));
  // The F test by generalized least squares when reads of one time share an error, against the
  // scatter between replicate wells when a level has two or more (P*, the curves and the
  // intercepts above stay those of ordinary least squares).
  if (rss_full > 0) {
    Eigen::MatrixXd x_full = design(reads, nw, nl, true), x_red = design(reads, nw, nl, false);
    Eigen::MatrixXd x_well = design(reads, nw, nl, Curves::per_well);
    Eigen::VectorXd yw = y, unused;
    const double shared = whiten_shared(reads, y - x_full * b_full, rss_full / t.df2, yw, {&x_full, &x_red, &x_well});
    // The whitening is invertible (g < 1), so the designs keep their rank; should rounding
    // say otherwise, the test stays the ordinary least squares one (shared_noise 0).
    double w_full = NAN, w_red = NAN;
    if (shared > 0 && solve(x_full, yw, unused, w_full) && solve(x_red, yw, unused, w_red)) {
      t.shared_noise = shared;
      rss_full = w_full;
      rss_red = w_red;
    } else {
      x_well = design(reads, nw, nl, Curves::per_well);
      yw = y;
    }
    rss_error = rss_full;
    double rss_well = NAN;
    if (nw > nl && solve(x_well, yw, unused, rss_well) && rss_full - rss_well > 0) {
      t.replicate_error = true;
      t.df2 = static_cast<int>((nw - nl) * k_degree);
      rss_error = rss_full - rss_well;  // between replicate wells of a level
    }
  }
  if (rss_full > 0) {
    t.f = std::max(rss_red - rss_full, 0.0) / t.df1 / (rss_error / t.df2);
    boost::math::fisher_f_distribution<double> dist(t.df1, t.df2);
    t.p_value = boost::math::cdf(boost::math::complement(dist, t.f));
  } else {
    t.f = rss_red > 0 ? INFINITY : 0, t.p_value = rss_red > 0 ? 0 : 1;
  }
  double reach = INFINITY;
  for (std::size_t l = 0; l < nl; ++l) reach = std::min(reach, curve(b_full, nw, l, 1));
  if (reach > 0) {
    t.product_level = reach / 2;
    for (std::size_t l = 0; l < nl; ++l)
      t.levels[l].et_needed = first_reach(b_full, nw, l, t.product_level) * t.u_common;
    t.et_ratio = t.levels.front().et_needed / t.levels.back().et_needed;
  }
  t.unstable = t.p_value < k_alpha && t.et_ratio > k_ratio_flag;
  t.verdict = verdict_of(t, unit);
  if (!t.left_out.empty())
    t.verdict += fmt::format("; left out, short of {} reads up to the common [E]·t: {}", k_min_reads,
                             fmt::join(t.left_out, ", "));
  return t;
}

}  // namespace

std::vector<StabilityTest> stability_tests(const std::vector<ProgressWell>& wells, double lead_s,
                                           const std::string& conc_unit) {
  std::map<double, std::map<double, std::vector<std::size_t>>> series;  // S0 → enzyme → wells
  for (std::size_t w = 0; w < wells.size(); ++w)
    if (std::isfinite(wells[w].enzyme) && wells[w].enzyme > 0 && std::isfinite(wells[w].s0))
      series[wells[w].s0][wells[w].enzyme].push_back(w);
  std::vector<StabilityTest> out;
  for (const auto& [s0, by_level] : series)
    if (by_level.size() >= 2) out.push_back(one_test(wells, s0, by_level, lead_s, conc_unit));
  return out;
}

}  // namespace vzero
