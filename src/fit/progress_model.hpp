// Internals of the progress-curve fit: the integrated rate law of one read with its
// derivatives, and the least-squares solver over the whole set.
#pragma once

#include <Eigen/Core>
#include <functional>
#include <string>
#include <vector>

namespace vzero::detail {

// S at reaction time tau (min) and its derivatives, for v = V·S/(a' …) written as the
// implicit equation F = a·ln(S0/S) + b·(S0 − S) − V·tau = 0 (progress.hpp).
struct ProgressPoint {
  double s = 0;             // substrate left
  double ds_da = 0, ds_db = 0, ds_dv = 0, ds_dtau = 0;
};
ProgressPoint progress_point(double tau, double s0, double a, double b, double v);

// W0(e^L) for any real L (Boost.Math below e^700, Newton on w + ln w = L above).
double lambert_w0_of_exp(double L);

// Residuals r (n) and Jacobian ∂r/∂θ (n × p) at θ; false when the model cannot be evaluated.
using ResidualFn = std::function<bool(const Eigen::VectorXd& theta, Eigen::VectorXd& r, Eigen::MatrixXd* jac)>;

struct LsqResult {
  Eigen::VectorXd theta;
  double rss = NAN;
  int iterations = 0;
  bool converged = false;
  Eigen::MatrixXd jac;  // at the optimum
  Eigen::VectorXd r;
};

// Levenberg–Marquardt with Marquardt scaling; parameters with fixed[j] stay at start[j].
// Converged when the relative offset (Bates & Watts 1981) falls below `tolerance`, the RSS
// is at most `exact_rss` (an exact fit to rounding), or no step lowers the RSS while the
// offset is already below 1e-6.
LsqResult least_squares(const ResidualFn& f, Eigen::VectorXd start, const std::vector<bool>& fixed,
                        int max_iterations, double exact_rss = 0, double tolerance = 1e-10);

// The clusters of the cluster-robust covariance: wells with one non-empty key (e.g. the same
// blank wells) form one cluster when at least `min_shared` clusters result, else every well is
// a cluster of its own. Fills of_well (0 … G−1, in order of first appearance) and `by`
// ("blank sets" or "wells"); returns G.
int well_clusters(const std::vector<std::string>& keys, int min_shared, std::vector<int>& of_well, std::string& by);

// CR1 cluster-robust covariance of θ at the optimum (Cameron & Miller, J. Human Resources 50,
// 2015): B·M·B·G/(G−1)·(N−1)/(N−p) with B = (JᵀJ)⁻¹, M = Σ_g (J_gᵀr_g)(J_gᵀr_g)ᵀ, J_g and r_g
// the rows of cluster g (cluster_of_row[i] in 0 … G−1), N rows, p columns.
Eigen::MatrixXd cluster_covariance(const Eigen::MatrixXd& jac, const Eigen::VectorXd& r,
                                   const std::vector<int>& cluster_of_row, int clusters);

// CR3 cluster-robust covariance of the first `shared` parameters when every other column of
// `jac` is one well's offset (1 on its reads; wells nested in clusters): the offsets are
// partialled out (X = the shared columns less their mean within each well, well_of_row), then
// A·M·A·(G−1)/G with A = (XᵀX)⁻¹, M = Σ_g (X_gᵀ ũ_g)(X_gᵀ ũ_g)ᵀ, ũ_g = (I − X_g·A·X_gᵀ)⁻¹ r_g
// (MacKinnon & White, J. Econometrics 29, 1985; Bell & McCaffrey, Survey Methodology 28, 2002:
// close to the delete-one-cluster jackknife, not biased low with few clusters as CR1 is).
// An empty well_of_row: no offsets, nothing partialled out.
// Empty when some cluster alone determines a shared parameter (its leave-out is singular).
Eigen::MatrixXd cluster_covariance_cr3(const Eigen::MatrixXd& jac, const Eigen::VectorXd& r, Eigen::Index shared,
                                       const std::vector<int>& well_of_row, const std::vector<int>& cluster_of_row,
                                       int clusters);

}  // namespace vzero::detail
