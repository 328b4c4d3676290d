// Internals of the report's kinetics section shared by the fit reader (report_fit.cpp)
// and the charts (report_fit_charts.cpp).
#pragma once

#include <Eigen/Dense>
#include <cmath>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "vzero/kinetic_model.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

using nlohmann::json;

// j[key] as a number (NaN if absent or not a number) or a string ("" likewise).
double num_of(const json& j, const char* key);
std::string str_of(const json& j, const char* key);
// A group value as the tables write it: strings as they are, numbers in their shortest form.
std::string text_of(const json& v);

struct Obs {
  double s = NAN, inhibitor = NAN, v = NAN;
};

struct Points {
  std::vector<Obs> used;
  std::vector<Obs> left_out;  // rows of the fit's group and role the fit did not use (flagged)
};

struct FitCurve {
  const vzero::KineticModel* model = nullptr;
  std::vector<double> params;
  Eigen::MatrixXd cov;
  double t = NAN;
  double rate(double s, double i) const { return model->rate(params, s, i, {}); }
  // Half-width of the pointwise band: t·√(gᵀ C g).
  double half_width(double s, double i) const {
    if (cov.rows() != static_cast<Eigen::Index>(params.size()) || !std::isfinite(t)) return NAN;
    std::vector<double> g(params.size());
    model->rate(params, s, i, g);
    Eigen::Map<const Eigen::VectorXd> gv(g.data(), static_cast<Eigen::Index>(g.size()));
    double var = gv.dot(cov * gv);
    return var >= 0 ? t * std::sqrt(var) : NAN;
  }
};

// The fitted curve of one fit entry of fit.json (model, estimates, covariance, t quantile).
FitCurve curve_of(const json& f);

// Levels of the inhibitor drawn as separate curves, and the level of a value.
std::vector<double> levels_of(const std::vector<Obs>& pts, bool inhibition);
std::size_t level_index(const std::vector<double>& levels, double inhibitor);

// What the three charts of one fit share.
struct FitPlot {
  FitCurve fc;
  Points pts;
  bool inhibition = false;
  std::vector<double> levels;
  std::string xu, vu, i_unit, icol, v_stem;
  double s_max = 0, v_max = 0;
  svg::Ticks tx;
  std::size_t level_of(const Obs& p) const { return level_index(levels, inhibition ? p.inhibitor : 0.0); }
  double fitted(const Obs& p) const { return fc.rate(p.s, inhibition ? p.inhibitor : 0.0); }
};

// The three figures of one fit: v against S, residuals, double reciprocal.
std::string fit_charts(const FitPlot& fp);

}  // namespace vzero::detail::report
