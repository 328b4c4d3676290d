// Rate laws with analytic gradients, parameter bounds and starting values.
#include <Eigen/QR>
#include <algorithm>
#include <cmath>
#include <fmt/format.h>

#include "fit/fit_models.hpp"
#include "core/text.hpp"
#include "vzero/error.hpp"

namespace vzero {

namespace {
struct ModelSpec {
  Model model;
  std::string_view key;
  std::string_view formula;
  std::vector<std::string> params;
};

const std::vector<ModelSpec>& specs() {
  static const std::vector<ModelSpec> all = {
      {Model::michaelis_menten, "mm", "v = Vmax*S/(Km + S)", {"Vmax", "Km"}},
      {Model::substrate_inhibition, "substrate-inhibition", "v = Vmax*S/(Km + S*(1 + S/Ki))", {"Vmax", "Km", "Ki"}},
      {Model::hill, "hill", "v = Vmax*S^n/(K_half^n + S^n)", {"Vmax", "K_half", "n"}},
      {Model::competitive, "competitive", "v = Vmax*S/(Km*(1 + I/Kic) + S)", {"Vmax", "Km", "Kic"}},
      {Model::uncompetitive, "uncompetitive", "v = Vmax*S/(Km + S*(1 + I/Kiu))", {"Vmax", "Km", "Kiu"}},
      {Model::mixed, "mixed", "v = Vmax*S/(Km*(1 + I/Kic) + S*(1 + I/Kiu))", {"Vmax", "Km", "Kic", "Kiu"}},
  };
  return all;
}

const ModelSpec& spec(Model m) {
  for (const auto& s : specs())
    if (s.model == m) return s;
  return specs().front();
}
}  // namespace

std::string_view to_string(Model m) { return spec(m).key; }
std::string_view formula(Model m) { return spec(m).formula; }
std::vector<std::string> parameter_names(Model m) { return spec(m).params; }
bool needs_inhibitor(Model m) {
  return m == Model::competitive || m == Model::uncompetitive || m == Model::mixed;
}

bool parse_model(std::string_view text, Model& out) {
  for (const auto& s : specs()) {
    if (detail::iequals(text, s.key)) {
      out = s.model;
      return true;
    }
  }
  if (detail::iequals(text, "michaelis-menten")) {
    out = Model::michaelis_menten;
    return true;
  }
  return false;
}

std::string_view to_string(Weighting w) {
  switch (w) {
    case Weighting::none: return "none";
    case Weighting::replicate_sd: return "replicate-sd";
    case Weighting::relative: return "relative";
  }
  return "none";
}

bool parse_weighting(std::string_view text, Weighting& out) {
  for (Weighting w : {Weighting::none, Weighting::replicate_sd, Weighting::relative}) {
    if (detail::iequals(text, to_string(w))) {
      out = w;
      return true;
    }
  }
  return false;
}

double model_rate(Model m, std::span<const double> p, double s, double inh, std::span<double> g) {
  const bool grad = !g.empty();
  const double vmax = p[0], km = p[1];
  switch (m) {
    case Model::michaelis_menten: {
      const double d = km + s;
      if (grad) {
        g[0] = s / d;
        g[1] = -vmax * s / (d * d);
      }
      return vmax * s / d;
    }
    case Model::substrate_inhibition: {
      const double ki = p[2];
      const double d = km + s + s * s / ki;
      if (grad) {
        g[0] = s / d;
        g[1] = -vmax * s / (d * d);
        g[2] = vmax * s * (s * s) / (ki * ki * d * d);
      }
      return vmax * s / d;
    }
    case Model::hill: {
      const double n = p[2];
      if (s <= 0) {
        if (grad) g[0] = g[1] = g[2] = 0.0;
        return 0.0;
      }
      // Written with r = (K/S)^n so that large n or S do not overflow S^n.
      const double log_ratio = std::log(km / s);
      const double r = std::exp(n * log_ratio);
      const double d = 1.0 + r;
      if (grad) {
        g[0] = 1.0 / d;
        g[1] = -vmax * r * n / (km * d * d);
        g[2] = -vmax * r * log_ratio / (d * d);
      }
      return vmax / d;
    }
    case Model::competitive: {
      const double kic = p[2];
      const double a = 1.0 + inh / kic;
      const double d = km * a + s;
      if (grad) {
        g[0] = s / d;
        g[1] = -vmax * s * a / (d * d);
        g[2] = vmax * s * km * inh / (kic * kic * d * d);
      }
      return vmax * s / d;
    }
    case Model::uncompetitive: {
      const double kiu = p[2];
      const double d = km + s * (1.0 + inh / kiu);
      if (grad) {
        g[0] = s / d;
        g[1] = -vmax * s / (d * d);
        g[2] = vmax * s * s * inh / (kiu * kiu * d * d);
      }
      return vmax * s / d;
    }
    case Model::mixed: {
      const double kic = p[2], kiu = p[3];
      const double a = 1.0 + inh / kic;
      const double d = km * a + s * (1.0 + inh / kiu);
      if (grad) {
        g[0] = s / d;
        g[1] = -vmax * s * a / (d * d);
        g[2] = vmax * s * km * inh / (kic * kic * d * d);
        g[3] = vmax * s * s * inh / (kiu * kiu * d * d);
      }
      return vmax * s / d;
    }
  }
  return NAN;
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

// Points usable in a linearisation: S > 0 and v > 0.
std::vector<std::size_t> linear_points(const FitPoints& pts) {
  std::vector<std::size_t> idx;
  for (std::size_t k = 0; k < pts.size(); ++k)
    if (pts.s[k] > 0 && pts.v[k] > 0) idx.push_back(k);
  return idx;
}

// Generalised Hanes–Woolf: S/v is linear in (1, S), (1, S, S²), (1, I, S), (1, S, S·I) or
// (1, I, S, S·I) for every model here but Hill (see fit.hpp for the rate laws).
bool hanes_woolf(Model m, const FitPoints& pts, std::vector<double>& p) {
  const auto idx = linear_points(pts);
  const int cols = m == Model::michaelis_menten ? 2 : m == Model::mixed ? 4 : 3;
  Eigen::MatrixXd x(static_cast<Eigen::Index>(idx.size()), cols);
  Eigen::VectorXd y(static_cast<Eigen::Index>(idx.size()));
  for (std::size_t r = 0; r < idx.size(); ++r) {
    const auto row = static_cast<Eigen::Index>(r);
    const double s = pts.s[idx[r]], i = pts.i[idx[r]];
    y(row) = s / pts.v[idx[r]];
    x(row, 0) = 1.0;
    switch (m) {
      case Model::michaelis_menten: x(row, 1) = s; break;
      case Model::substrate_inhibition: x(row, 1) = s, x(row, 2) = s * s; break;
      case Model::competitive: x(row, 1) = i, x(row, 2) = s; break;
      case Model::uncompetitive: x(row, 1) = s, x(row, 2) = s * i; break;
      case Model::mixed: x(row, 1) = i, x(row, 2) = s, x(row, 3) = s * i; break;
      case Model::hill: return false;
    }
  }
  Eigen::VectorXd b;
  if (!ols(x, y, b)) return false;
  switch (m) {
    case Model::michaelis_menten: p = {1 / b(1), b(0) / b(1)}; break;
    case Model::substrate_inhibition: p = {1 / b(1), b(0) / b(1), b(1) / b(2)}; break;
    case Model::competitive: p = {1 / b(2), b(0) / b(2), b(0) / b(1)}; break;
    case Model::uncompetitive: p = {1 / b(1), b(0) / b(1), b(1) / b(2)}; break;
    case Model::mixed: p = {1 / b(2), b(0) / b(2), b(0) / b(1), b(2) / b(3)}; break;
    case Model::hill: return false;
  }
  return all_positive(p);
}

// Hill plot: ln(v/(Vmax₀ − v)) = n·ln S − n·ln K_half, with Vmax₀ from Hanes–Woolf or
// 1.1 × the largest rate, whichever is larger.
bool hill_plot(const FitPoints& pts, std::vector<double>& p) {
  std::vector<double> mm;
  double vmax0 = 1.1 * max_positive(pts.v);
  if (hanes_woolf(Model::michaelis_menten, pts, mm)) vmax0 = std::max(vmax0, mm[0]);
  std::vector<double> xs, ys;
  for (std::size_t k = 0; k < pts.size(); ++k) {
    if (pts.s[k] > 0 && pts.v[k] > 0 && pts.v[k] < vmax0) {
      xs.push_back(std::log(pts.s[k]));
      ys.push_back(std::log(pts.v[k] / (vmax0 - pts.v[k])));
    }
  }
  Eigen::MatrixXd x(static_cast<Eigen::Index>(xs.size()), 2);
  Eigen::VectorXd y(static_cast<Eigen::Index>(xs.size()));
  for (std::size_t r = 0; r < xs.size(); ++r) {
    x(static_cast<Eigen::Index>(r), 0) = 1.0;
    x(static_cast<Eigen::Index>(r), 1) = xs[r];
    y(static_cast<Eigen::Index>(r)) = ys[r];
  }
  Eigen::VectorXd b;
  if (!ols(x, y, b) || !(b(1) > 0)) return false;
  p = {vmax0, std::exp(-b(0) / b(1)), b(1)};
  return all_positive(p);
}

std::vector<double> geometric(double from, double to, int count) {
  std::vector<double> g;
  for (int k = 0; k < count; ++k) g.push_back(from * std::pow(to / from, static_cast<double>(k) / (count - 1)));
  return g;
}

// Grid over the parameters after Vmax; f is linear in Vmax, so Vmax = Σwgv/Σwg² (g = f at Vmax 1).
bool grid_start(Model m, const FitPoints& pts, std::vector<double>& best) {
  const double s_lo = min_positive(pts.s) / 10, s_hi = 10 * max_positive(pts.s);
  const double i_lo = min_positive(pts.i) / 10, i_hi = 10 * max_positive(pts.i);
  std::vector<std::vector<double>> axes;
  const auto k_axis = geometric(s_lo, s_hi, 9);
  const auto i_axis = geometric(i_lo, i_hi, 9);
  axes.push_back(k_axis);
  switch (m) {
    case Model::michaelis_menten: break;
    case Model::substrate_inhibition: axes.push_back(k_axis); break;
    case Model::hill: axes.push_back({0.5, 0.75, 1.0, 1.5, 2.0, 3.0, 4.0}); break;
    case Model::competitive:
    case Model::uncompetitive: axes.push_back(i_axis); break;
    case Model::mixed: axes.push_back(i_axis), axes.push_back(i_axis); break;
  }
  std::vector<std::size_t> at(axes.size(), 0);
  std::vector<double> p(axes.size() + 1, 1.0);
  double best_rss = INFINITY;
  for (;;) {
    for (std::size_t a = 0; a < axes.size(); ++a) p[a + 1] = axes[a][at[a]];
    p[0] = 1.0;
    double num = 0, den = 0;
    std::vector<double> g(pts.size());
    for (std::size_t k = 0; k < pts.size(); ++k) {
      g[k] = model_rate(m, p, pts.s[k], pts.i[k]);
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

Bounds parameter_bounds(Model m, const FitPoints& pts) {
  // Wide enough never to bind a real optimum; a parameter that reaches one is reported as
  // not determined by the data (e.g. Km → ∞ when the rates never level off).
  constexpr double k_span = 1e6;
  const double v_max = max_positive(pts.v);
  const double s_lo = min_positive(pts.s) / k_span, s_hi = max_positive(pts.s) * k_span;
  const double i_lo = min_positive(pts.i) / k_span, i_hi = max_positive(pts.i) * k_span;
  Bounds b;
  b.lo = {v_max / k_span, s_lo};
  b.hi = {v_max * k_span, s_hi};
  switch (m) {
    case Model::michaelis_menten: break;
    case Model::substrate_inhibition: b.lo.push_back(s_lo), b.hi.push_back(s_hi); break;
    case Model::hill: b.lo.push_back(0.05), b.hi.push_back(20.0); break;
    case Model::competitive:
    case Model::uncompetitive: b.lo.push_back(i_lo), b.hi.push_back(i_hi); break;
    case Model::mixed:
      b.lo.insert(b.lo.end(), {i_lo, i_lo});
      b.hi.insert(b.hi.end(), {i_hi, i_hi});
      break;
  }
  return b;
}

std::vector<Start> automatic_starts(Model m, const FitPoints& pts) {
  std::vector<Start> out;
  std::vector<double> p;
  if (m == Model::hill ? hill_plot(pts, p) : hanes_woolf(m, pts, p))
    out.push_back({m == Model::hill ? "Hill plot" : "Hanes-Woolf", p});
  if (grid_start(m, pts, p)) out.push_back({"grid", p});
  return out;
}

double weighted_rss(Model m, const FitPoints& pts, const std::vector<double>& p, std::vector<double>* fitted) {
  double rss = 0;
  if (fitted) fitted->resize(pts.size());
  for (std::size_t k = 0; k < pts.size(); ++k) {
    const double f = model_rate(m, p, pts.s[k], pts.i[k]);
    if (fitted) (*fitted)[k] = f;
    const double r = pts.v[k] - f;
    rss += pts.w[k] * r * r;
  }
  return rss;
}

Eigen::MatrixXd natural_jacobian(Model m, const FitPoints& pts, const std::vector<double>& p) {
  Eigen::MatrixXd j(static_cast<Eigen::Index>(pts.size()), static_cast<Eigen::Index>(p.size()));
  std::vector<double> g(p.size());
  for (std::size_t k = 0; k < pts.size(); ++k) {
    model_rate(m, p, pts.s[k], pts.i[k], g);
    for (std::size_t c = 0; c < p.size(); ++c)
      j(static_cast<Eigen::Index>(k), static_cast<Eigen::Index>(c)) = pts.sqrt_w[k] * g[c];
  }
  return j;
}

}  // namespace detail
}  // namespace vzero
