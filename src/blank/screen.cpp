#include "blank/screen.hpp"

#include <algorithm>
#include <cmath>

#include "core/start_screen.hpp"

namespace vzero::detail {
namespace {

// A blank's start is screened over its first reads as a sample's is (5 reads at least left).
constexpr int k_min_points = 5;
// Fewest blanks, at one read, whose median makes the shared bend there.
constexpr int k_bend_blanks = 3;
constexpr double k_z_cut = 4.0;

double median_of(std::vector<double> v) {
  if (v.empty()) return NAN;
  const auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
  std::nth_element(v.begin(), mid, v.end());
  return v.size() % 2 ? *mid : 0.5 * (*mid + *std::max_element(v.begin(), mid));
}

// The least-squares line of the finite values of y from read `from` on; NaN below 3.
LineFit line_from(const std::vector<double>& t, const std::vector<double>& y, std::size_t from) {
  std::vector<double> xs, ys;
  for (std::size_t i = from; i < t.size(); ++i)
    if (std::isfinite(y[i])) {
      xs.push_back(t[i]);
      ys.push_back(y[i]);
    }
  LineFit l;
  l.n = static_cast<int>(xs.size());
  if (l.n < 3) return l;
  return least_squares_line(xs.data(), ys.data(), l.n, nullptr, Residual::stepwise);
}

// Robust read-noise SD from the second differences of consecutive finite values (Var = 6σ²
// for white noise); NaN below 3 values.
double second_difference_sd(const std::vector<double>& y) {
  std::vector<double> v, d;
  for (double x : y)
    if (std::isfinite(x)) v.push_back(x);
  for (std::size_t i = 1; i + 1 < v.size(); ++i) d.push_back(std::fabs(v[i + 1] - 2 * v[i] + v[i - 1]));
  return d.empty() ? NAN : 1.4826 * median_of(std::move(d)) / std::sqrt(6.0);
}

// Step 2: the median of the blanks' departures from their own lines, read by read.
Eigen::VectorXd shared_bend(const std::vector<double>& t, const std::vector<std::vector<double>>& y) {
  const auto reads = static_cast<Eigen::Index>(t.size());
  Eigen::VectorXd bend = Eigen::VectorXd::Zero(reads);
  if (static_cast<int>(y.size()) < k_bend_blanks) return bend;
  std::vector<std::vector<double>> departure;
  for (const auto& v : y) {
    const LineFit l = line_from(t, v, 0);
    if (!std::isfinite(l.slope)) continue;
    std::vector<double> d(t.size(), NAN);
    for (std::size_t i = 0; i < t.size(); ++i) d[i] = v[i] - (l.intercept + l.slope * t[i]);
    departure.push_back(std::move(d));
  }
  std::vector<double> at;
  for (std::size_t i = 0; i < t.size(); ++i) {
    at.clear();
    for (const auto& d : departure)
      if (std::isfinite(d[i])) at.push_back(d[i]);
    if (static_cast<int>(at.size()) >= k_bend_blanks) bend(static_cast<Eigen::Index>(i)) = median_of(at);
  }
  return bend;
}

}  // namespace

BlankScreen screen_blanks(const Channel& c, const std::vector<int>& columns) {
  const std::size_t reads = c.time_s.size(), m = columns.size();
  BlankScreen s;
  s.skip.assign(m, 0);
  s.line.resize(m);
  s.reads = Eigen::MatrixXd::Constant(static_cast<Eigen::Index>(reads), static_cast<Eigen::Index>(m), NAN);
  // Step 1: each blank's usable reads (NaN elsewhere).
  std::vector<std::vector<double>> y(m, std::vector<double>(reads, NAN));
  for (std::size_t k = 0; k < m; ++k)
    for (std::size_t i = 0; i < reads; ++i) {
      const auto ii = static_cast<Eigen::Index>(i);
      const double v = c.values(ii, columns[k]);
      if (c.status(ii, columns[k]) == ReadStatus::ok && std::isfinite(v)) y[k][i] = v;
    }
  s.bend = shared_bend(c.time_s, y);
  // Step 3: each blank less the bend; the pooled read noise.
  std::vector<std::vector<double>> z = y;
  std::vector<double> sds;
  for (auto& v : z) {
    for (std::size_t i = 0; i < reads; ++i) v[i] -= s.bend(static_cast<Eigen::Index>(i));
    const double sd = second_difference_sd(v);
    if (std::isfinite(sd)) sds.push_back(sd);
  }
  s.noise_sd = median_of(sds);
  for (std::size_t k = 0; k < m; ++k) {
    std::vector<double> tt, zz;
    std::vector<std::size_t> at;
    for (std::size_t i = 0; i < reads; ++i)
      if (std::isfinite(z[k][i])) {
        tt.push_back(c.time_s[i]);
        zz.push_back(z[k][i]);
        at.push_back(i);
      }
    if (s.noise_sd > 0)
      s.skip[k] = screen_start(tt.data(), zz.data(), static_cast<int>(tt.size()), k_min_points, s.noise_sd, k_z_cut).skip;
    // Step 4: the disturbed reads replaced by the line of the rest (bend off) plus the bend.
    std::size_t from = s.skip[k] > 0 ? at[static_cast<std::size_t>(s.skip[k])] : 0;
    LineFit zl = line_from(c.time_s, z[k], from);
    if (s.skip[k] > 0 && !std::isfinite(zl.slope)) {
      s.skip[k] = 0;
      from = 0;
      zl = line_from(c.time_s, z[k], from);
    }
    s.line[k] = line_from(c.time_s, y[k], from);
    for (std::size_t i = 0; i < reads; ++i) {
      const auto ii = static_cast<Eigen::Index>(i);
      s.reads(ii, static_cast<Eigen::Index>(k)) =
          i < from && std::isfinite(y[k][i]) && s.skip[k] > 0 ? zl.intercept + zl.slope * c.time_s[i] + s.bend(ii)
                                                               : y[k][i];
    }
  }
  return s;
}

}  // namespace vzero::detail
