// Edge and drift effects on a screening plate: the controls' rates against row, column,
// position and edge (formulas and sources in include/vzero/plate_quality.hpp and
// docs/methods.md).
#include <cmath>
#include <string>
#include <utility>
#include <vector>

#include "core/stats.hpp"
#include "vzero/analysis.hpp"
#include "vzero/plate_quality.hpp"

namespace vzero {

namespace {

// y = a_g + b·x with one intercept per group g (full-activity, no-activity) and a common
// slope b, by least squares on the deviations from each group's own means.
Trend common_slope(const std::vector<double>& x, const std::vector<double>& y, const std::vector<int>& group,
                   double extent) {
  Trend t;
  t.n = static_cast<int>(x.size());
  double sum_x[2] = {0, 0}, sum_y[2] = {0, 0};
  int n[2] = {0, 0};
  for (std::size_t i = 0; i < x.size(); ++i) {
    sum_x[group[i]] += x[i];
    sum_y[group[i]] += y[i];
    ++n[group[i]];
  }
  const int groups = (n[0] > 0) + (n[1] > 0);
  const int df = t.n - groups - 1;
  if (df < 1) return t;
  double mx[2], my[2];
  for (int g = 0; g < 2; ++g) {
    mx[g] = n[g] ? sum_x[g] / n[g] : 0;
    my[g] = n[g] ? sum_y[g] / n[g] : 0;
  }
  double sxx = 0, sxy = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    const double dx = x[i] - mx[group[i]];
    sxx += dx * dx;
    sxy += dx * (y[i] - my[group[i]]);
  }
  if (!(sxx > 0)) return t;
  const double b = sxy / sxx;
  double rss = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    const double r = y[i] - my[group[i]] - b * (x[i] - mx[group[i]]);
    rss += r * r;
  }
  const double se = std::sqrt(rss / df / sxx);
  t.slope = b;
  t.change_pct = b * extent;
  // A perfect line: significant when it slopes at all.
  t.p = se > 0 ? 2 * detail::student_t_sf(std::fabs(b) / se, df) : (b != 0 ? 0.0 : 1.0);
  return t;
}

}  // namespace

std::string PlateTrends::significant() const {
  std::string out;
  const std::pair<const char*, const Trend*> axes[] = {
      {"row", &row}, {"column", &column}, {"position", &position}, {"edge", &edge}};
  for (const auto& [name, t] : axes)
    if (t->p < level) out += (out.empty() ? "" : ";") + std::string(name);
  return out;
}

PlateTrends control_trends(const std::vector<ControlPoint>& points, int rows, int columns,
                           const PlateControls& controls, double level) {
  PlateTrends out;
  out.level = level;
  if (!controls.normalisable()) return out;
  const double window = controls.full.mean - controls.none.mean;
  std::vector<double> y, row, column, position, edge;
  std::vector<int> group;
  for (const ControlPoint& p : points) {
    if (!std::isfinite(p.v0)) continue;
    y.push_back(100 * p.v0 / window);
    group.push_back(p.full ? 0 : 1);
    row.push_back(p.row);
    column.push_back(p.column);
    position.push_back(static_cast<double>(p.row) * columns + p.column);
    const bool outer = p.row == 0 || p.row == rows - 1 || p.column == 0 || p.column == columns - 1;
    edge.push_back(outer ? 1.0 : 0.0);
  }
  out.row = common_slope(row, y, group, rows - 1);
  out.column = common_slope(column, y, group, columns - 1);
  out.position = common_slope(position, y, group, static_cast<double>(rows) * columns - 1);
  out.edge = common_slope(edge, y, group, 1);
  return out;
}

PlateTrends channel_trends(const RunAnalysis& run, const ChannelAnalysis& channel, double level) {
  std::vector<ControlPoint> points;
  for (const RateRow& r : channel.rows)
    if (is_control(r.role) && r.flags.empty() && std::isfinite(r.v0))
      points.push_back({r.well.row, r.well.column, r.role == Role::full_activity, r.v0});
  return control_trends(points, run.run->format.rows, run.run->format.columns, channel.controls, level);
}

}  // namespace vzero
