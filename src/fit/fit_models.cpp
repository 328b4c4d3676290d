// Starting values (a model's linearisation, a grid), the weighted RSS and the Jacobian of
// any registered kinetic model; the weighting names.
#include <fmt/format.h>
#include <fmt/ranges.h>
#include <Eigen/QR>
#include <algorithm>
#include <cmath>

#include "core/stats.hpp"
#include "core/text.hpp"
#include "fit/fit_models.hpp"
#include "vzero/error.hpp"

namespace vzero {

namespace {
constexpr EnumName<Weighting> k_weightings[] = {
    {Weighting::none, "none"}, {Weighting::replicate_sd, "replicate-sd"}, {Weighting::relative, "relative"}};
}  // namespace

template <>
std::span<const EnumName<Weighting>> enum_names<Weighting>() {
  return k_weightings;
}

std::string_view to_string(Weighting w) { return enum_text(w); }

bool parse_weighting(std::string_view text, Weighting& out) {
  for (const auto& n : k_weightings)  // case-insensitive, as the fit's options have always been
    if (detail::iequals(text, n.name)) {
      out = n.value;
      return true;
    }
  return false;
}

namespace detail {

namespace {
double max_positive(const std::vector<double>& x) {
  double m = 0;
  for (double e : x) m = std::max(m, e);
  return m;
}
double min_positive(const std::vector<double>& x) {
  double m = INFINITY;
  for (double e : x)
    if (e > 0) m = std::min(m, e);
  return std::isfinite(m) ? m : 1.0;
}

// Ordinary least squares y ≈ X·b; false when X is rank deficient or a value is not finite.
bool ols(const Eigen::MatrixXd& x, const Eigen::VectorXd& y, Eigen::VectorXd& b) {
  if (x.rows() < x.cols()) return false;
  Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(x);
  if (qr.rank() < x.cols()) return false;
  b = qr.solve(y);
  return b.allFinite();
}

bool all_positive(const std::vector<double>& p) {
  return std::all_of(p.begin(), p.end(), [](double e) { return std::isfinite(e) && e > 0; });
}

// Every start finite, and > 0 unless the parameter may take any sign.
bool all_positive_or_signed(const KineticModel& m, const std::vector<double>& p) {
  for (std::size_t j = 0; j < p.size(); ++j)
    if (!std::isfinite(p[j]) || (!m.parameters[j].any_sign && !(p[j] > 0))) return false;
  return p.size() == m.parameters.size();
}

// Points usable in a linearisation: S > 0 and v > 0.
std::vector<std::size_t> linear_points(const FitPoints& pts) {
  std::vector<std::size_t> idx;
  for (std::size_t k = 0; k < pts.size(); ++k)
    if (pts.s[k] > 0 && pts.v[k] > 0) idx.push_back(k);
  return idx;
}

// Ordinary least squares on the model's straight-line form over the points with S > 0 and
// v > 0 that its row function takes; false when there is none, the fit is rank deficient, or
// a start is not finite and > 0.
bool linear_start(const Linearisation& l, const FitPoints& pts, double v_ceiling, std::vector<double>& p) {
  std::vector<double> ys, xs;
  std::vector<double> x(static_cast<std::size_t>(l.columns));
  for (std::size_t k : linear_points(pts)) {
    double y = NAN;
    if (!l.row(pts.s[k], pts.i[k], pts.v[k], v_ceiling, x, y)) continue;
    ys.push_back(y);
    xs.insert(xs.end(), x.begin(), x.end());
  }
  const auto cols = static_cast<Eigen::Index>(l.columns);
  Eigen::MatrixXd design(static_cast<Eigen::Index>(ys.size()), cols);
  Eigen::VectorXd response(static_cast<Eigen::Index>(ys.size()));
  for (std::size_t r = 0; r < ys.size(); ++r) {
    const auto row = static_cast<Eigen::Index>(r);
    response(row) = ys[r];
    for (Eigen::Index c = 0; c < cols; ++c)
      design(row, c) = xs[r * static_cast<std::size_t>(cols) + static_cast<std::size_t>(c)];
  }
  Eigen::VectorXd b;
  if (!ols(design, response, b)) return false;
  p = l.parameters(std::span<const double>(b.data(), static_cast<std::size_t>(b.size())), v_ceiling);
  return all_positive(p);
}

// Upper estimate of Vmax: 1.1 × the largest rate, or the Hanes–Woolf Vmax (S/v = Km/Vmax +
// S/Vmax) when that is larger and the line gives a positive Vmax and Km.
double rate_ceiling(const FitPoints& pts) {
  double ceiling = 1.1 * max_positive(pts.v);
  std::vector<double> s, s_over_v;
  for (std::size_t k : linear_points(pts)) {
    s.push_back(pts.s[k]);
    s_over_v.push_back(pts.s[k] / pts.v[k]);
  }
  const detail::LineFit l = detail::least_squares_line(s.data(), s_over_v.data(), static_cast<int>(s.size()));
  if (all_positive({1 / l.slope, l.intercept / l.slope})) ceiling = std::max(ceiling, 1 / l.slope);
  return ceiling;
}

// Grid over the parameters after Vmax; f is linear in Vmax, so Vmax = Σwgv/Σwg² (g = f at Vmax 1).
bool grid_start(const KineticModel& m, const FitPoints& pts, std::vector<double>& best) {
  const std::vector<std::vector<double>> axes = start_grid_axes(m, data_scale(pts));
  std::vector<std::size_t> at(axes.size(), 0);
  std::vector<double> p(axes.size() + 1, 1.0);
  double best_rss = INFINITY;
  for (;;) {
    for (std::size_t a = 0; a < axes.size(); ++a) p[a + 1] = axes[a][at[a]];
    p[0] = 1.0;
    double num = 0, den = 0;
    std::vector<double> g(pts.size());
    for (std::size_t k = 0; k < pts.size(); ++k) {
      g[k] = m.rate(p, pts.s[k], pts.i[k], {});
      num += pts.w[k] * g[k] * pts.v[k];
      den += pts.w[k] * g[k] * g[k];
    }
    if (den > 0 && num > 0) {
      p[0] = num / den;
      const double rss = weighted_rss(m, pts, p);
      if (rss < best_rss) best_rss = rss, best = p;
    }
    std::size_t a = 0;
    while (a < axes.size() && ++at[a] == axes[a].size()) at[a++] = 0;
    if (a == axes.size()) break;
  }
  return std::isfinite(best_rss);
}
}  // namespace

// Per parameter: the value it is held at (FitOptions::fixed), NaN when it is fitted. A name
// the model lacks, or a value its scale cannot take, is a UsageError.
std::vector<double> held_values(const KineticModel& m, const FitOptions& options) {
  const auto names = m.parameter_names();
  std::vector<double> held(names.size(), NAN);
  for (const auto& [name, value] : options.fixed) {
    const auto it = std::find(names.begin(), names.end(), name);
    if (it == names.end())
      throw UsageError(fmt::format("FitOptions: fixed names {}, which the {} model lacks; its parameters are {}", name,
                                   m.name, fmt::format("{}", fmt::join(names, ", "))));
    const KineticParameter& p = m.parameters[static_cast<std::size_t>(it - names.begin())];
    if (!std::isfinite(value) || (!p.any_sign && !(value > 0)))
      throw UsageError(fmt::format("FitOptions: fixed {} = {}; it must be finite{}", name, fmt::format("{:.6g}", value),
                                   p.any_sign ? "" : " and > 0"));
    held[static_cast<std::size_t>(it - names.begin())] = value;
  }
  for (std::size_t j = 0; j < options.start.size() && j < names.size(); ++j)
    if (!m.parameters[j].any_sign && !(options.start[j] > 0))
      throw UsageError(fmt::format("FitOptions: start of {} is {}; it must be > 0", names[j],
                                   fmt::format("{:.6g}", options.start[j])));
  return held;
}

DataScale data_scale(const FitPoints& pts) {
  return {max_positive(pts.v), min_positive(pts.s), max_positive(pts.s), min_positive(pts.i), max_positive(pts.i)};
}

Bounds parameter_bounds(const KineticModel& m, const FitPoints& pts) {
  return vzero::parameter_bounds(m, data_scale(pts));
}

std::vector<Start> automatic_starts(const KineticModel& m, const FitPoints& pts, const std::vector<double>& fixed) {
  std::vector<Start> out;
  std::vector<double> p = fixed;
  if (m.start) {
    if (m.start(pts.s, pts.v, pts.w, p) && all_positive_or_signed(m, p)) out.push_back({m.start_method, p});
    return out;
  }
  if (m.linearisation && linear_start(*m.linearisation, pts, rate_ceiling(pts), p))
    out.push_back({m.linearisation->method, p});
  if (grid_start(m, pts, p)) out.push_back({"grid", p});
  for (auto& st : out)  // a fixed parameter keeps its value whatever the rule found
    for (std::size_t j = 0; j < fixed.size() && j < st.p.size(); ++j)
      if (!std::isnan(fixed[j])) st.p[j] = fixed[j];
  return out;
}

double weighted_rss(const KineticModel& m, const FitPoints& pts, const std::vector<double>& p,
                    std::vector<double>* fitted) {
  double rss = 0;
  if (fitted) fitted->resize(pts.size());
  for (std::size_t k = 0; k < pts.size(); ++k) {
    const double f = m.rate(p, pts.s[k], pts.i[k], {});
    if (fitted) (*fitted)[k] = f;
    const double r = pts.v[k] - f;
    rss += pts.w[k] * r * r;
  }
  return rss;
}

Eigen::MatrixXd natural_jacobian(const KineticModel& m, const FitPoints& pts, const std::vector<double>& p) {
  Eigen::MatrixXd j(static_cast<Eigen::Index>(pts.size()), static_cast<Eigen::Index>(p.size()));
  std::vector<double> g(p.size());
  for (std::size_t k = 0; k < pts.size(); ++k) {
    m.rate(p, pts.s[k], pts.i[k], g);
    for (std::size_t c = 0; c < p.size(); ++c)
      j(static_cast<Eigen::Index>(k), static_cast<Eigen::Index>(c)) = pts.sqrt_w[k] * g[c];
  }
  return j;
}

}  // namespace detail
}  // namespace vzero
