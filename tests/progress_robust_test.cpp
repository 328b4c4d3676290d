// The cluster-robust (CR1) covariance of the progress-curve fit (src/fit/progress_robust.cpp).
// Check values: worked by hand here from the formula (Cameron & Miller, J. Human Resources 50,
// 2015); the NumPy cross-check on a whole fit is tests/progress_scipy/.
#include <Eigen/Core>
#include <string>
#include <vector>

#include "fit/progress_model.hpp"
#include "test_support.hpp"

TEST_CASE("CR1 cluster-robust covariance: a straight line worked by hand") {
  // y = a + b·x at x = 0, 1, 2, 3 with least-squares residuals r = (1, −1, −1, 1) (Σr = Σx·r = 0);
  // clusters {0, 1} and {2, 3}. By hand: B = (JᵀJ)⁻¹ = [[0.7, −0.3], [−0.3, 0.2]]; scores
  // J_gᵀr_g = (0, −1) and (0, 1), M = [[0, 0], [0, 2]]; B·M·B = [[0.18, −0.12], [−0.12, 0.08]];
  // times G/(G−1)·(N−1)/(N−p) = 2·3/2 = 3: [[0.54, −0.36], [−0.36, 0.24]].
  Eigen::MatrixXd j(4, 2);
  j << 1, 0, 1, 1, 1, 2, 1, 3;
  Eigen::VectorXd r(4);
  r << 1, -1, -1, 1;
  const Eigen::MatrixXd v = vzero::detail::cluster_covariance(j, r, {0, 0, 1, 1}, 2);
  CHECK(v(0, 0) == doctest::Approx(0.54).epsilon(1e-12));
  CHECK(v(0, 1) == doctest::Approx(-0.36).epsilon(1e-12));
  CHECK(v(1, 0) == doctest::Approx(-0.36).epsilon(1e-12));
  CHECK(v(1, 1) == doctest::Approx(0.24).epsilon(1e-12));
  // Which wells form clusters: five or more shared keys, else single wells.
  std::vector<int> of;
  std::string by;
  CHECK(vzero::detail::well_clusters({"a", "a", "b", "c", "", "d", "e"}, 5, of, by) == 6);
  CHECK(by == "blank sets");
  CHECK(of == std::vector<int>{0, 0, 1, 2, 3, 4, 5});
  CHECK(vzero::detail::well_clusters({"a", "a", "b", "b"}, 5, of, by) == 4);
  CHECK(by == "wells");
  CHECK(vzero::detail::well_clusters({"", "", ""}, 5, of, by) == 3);
  CHECK(by == "wells");
}
