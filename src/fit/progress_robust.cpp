// The cluster-robust (CR1) covariance of the progress-curve fit: reads of one well, or of
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

}  // namespace vzero::detail
