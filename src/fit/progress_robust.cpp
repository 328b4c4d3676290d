// The cluster-robust (CR3, or CR1) covariance of the progress-curve fit: reads of one well, or of
// wells that share a blank, are not independent (per-well drift, a disturbed start the rate
// law does not model, the blank's own noise subtracted from every well that uses it), so
// s²(JᵀJ)⁻¹ reports the fit's precision but not its accuracy.
#include <Eigen/Cholesky>
#include <map>

#include "fit/progress_model.hpp"

namespace vzero::detail {

int well_clusters(const std::vector<std::string>& keys, int min_shared, std::vector<int>& of_well, std::string& by) {
  std::map<std::string, int> index;
  int shared = 0;
  of_well.assign(keys.size(), 0);
  for (std::size_t w = 0; w < keys.size(); ++w) {
    if (keys[w].empty()) {
      of_well[w] = shared++;  // a well of its own
      continue;
    }
    const auto [it, added] = index.emplace(keys[w], shared);
    if (added) ++shared;
    of_well[w] = it->second;
  }
  if (!index.empty() && shared >= min_shared && shared < static_cast<int>(keys.size())) {
    by = "blank sets";
    return shared;
  }
  for (std::size_t w = 0; w < keys.size(); ++w) of_well[w] = static_cast<int>(w);
  by = "wells";
  return static_cast<int>(keys.size());
}

Eigen::MatrixXd cluster_covariance(const Eigen::MatrixXd& jac, const Eigen::VectorXd& r,
                                   const std::vector<int>& cluster_of_row, int clusters) {
  const Eigen::Index n = jac.rows(), p = jac.cols();
  Eigen::MatrixXd score = Eigen::MatrixXd::Zero(clusters, p);  // row g: J_gᵀ r_g
  for (Eigen::Index i = 0; i < n; ++i) score.row(cluster_of_row[static_cast<std::size_t>(i)]) += r(i) * jac.row(i);
  const Eigen::MatrixXd meat = score.transpose() * score;
  const Eigen::MatrixXd jtj = jac.transpose() * jac;
  const Eigen::MatrixXd bread = jtj.ldlt().solve(Eigen::MatrixXd::Identity(p, p));
  const double g = clusters;
  const double scale = g / (g - 1) * static_cast<double>(n - 1) / static_cast<double>(n - p);
  return scale * bread * meat * bread;
}

Eigen::MatrixXd cluster_covariance_cr3(const Eigen::MatrixXd& jac, const Eigen::VectorXd& r, Eigen::Index shared,
                                       const std::vector<int>& well_of_row, const std::vector<int>& cluster_of_row,
                                       int clusters) {
  const Eigen::Index n = jac.rows();
  // X: the shared columns less their mean within each well (the offsets partialled out).
  Eigen::MatrixXd x = jac.leftCols(shared);
  std::map<int, std::pair<Eigen::RowVectorXd, double>> mean;  // well → sum, count
  for (Eigen::Index i = 0; i < n && !well_of_row.empty(); ++i) {
    auto& [sum, count] = mean.try_emplace(well_of_row[static_cast<std::size_t>(i)],
                                          Eigen::RowVectorXd::Zero(shared), 0.0).first->second;
    sum += x.row(i), count += 1;
  }
  for (Eigen::Index i = 0; i < n && !well_of_row.empty(); ++i) {
    const auto& [sum, count] = mean.at(well_of_row[static_cast<std::size_t>(i)]);
    x.row(i) -= sum / count;
  }
  const Eigen::MatrixXd xtx = x.transpose() * x;
  const Eigen::MatrixXd a = xtx.ldlt().solve(Eigen::MatrixXd::Identity(shared, shared));
  std::vector<std::vector<Eigen::Index>> rows(static_cast<std::size_t>(clusters));
  for (Eigen::Index i = 0; i < n; ++i) rows[static_cast<std::size_t>(cluster_of_row[static_cast<std::size_t>(i)])].push_back(i);
  Eigen::MatrixXd meat = Eigen::MatrixXd::Zero(shared, shared);
  for (const auto& idx : rows) {
    Eigen::MatrixXd xg(static_cast<Eigen::Index>(idx.size()), shared);
    Eigen::VectorXd rg(static_cast<Eigen::Index>(idx.size()));
    for (std::size_t k = 0; k < idx.size(); ++k) xg.row(static_cast<Eigen::Index>(k)) = x.row(idx[k]), rg(static_cast<Eigen::Index>(k)) = r(idx[k]);
    // (I − X_g·A·X_gᵀ)⁻¹ r_g = r_g + X_g·(XᵀX − X_gᵀX_g)⁻¹·X_gᵀ r_g (Woodbury): the rest must determine θ.
    const Eigen::MatrixXd rest = xtx - xg.transpose() * xg;
    const Eigen::LDLT<Eigen::MatrixXd> ldlt(rest);
    if (ldlt.info() != Eigen::Success || !ldlt.isPositive() || ldlt.vectorD().minCoeff() <= 1e-12 * xtx.diagonal().maxCoeff())
      return {};
    const Eigen::VectorXd u = rg + xg * ldlt.solve(xg.transpose() * rg);
    const Eigen::VectorXd score = xg.transpose() * u;
    meat += score * score.transpose();
  }
  const double g = clusters;
  return (g - 1) / g * a * meat * a;
}

}  // namespace vzero::detail
