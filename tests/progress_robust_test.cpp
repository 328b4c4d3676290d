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

TEST_CASE("CR3 cluster-robust covariance: the same line worked by hand") {
  // The line above, no offsets (well_of_row empty: nothing to partial out). By hand,
  // with (I − X_g·A·X_gᵀ)⁻¹r_g = r_g + X_g·(XᵀX − X_gᵀX_g)⁻¹·X_gᵀr_g: cluster {0, 1}:
  // (XᵀX − X_1ᵀX_1)⁻¹ = [[2, 5], [5, 13]]⁻¹ = [[13, −5], [−5, 2]], X_1ᵀr_1 = (0, −1), ũ_1 = (6, 2),
  // score (8, 2); cluster {2, 3}: [[2, 1], [1, 1]]⁻¹ = [[1, −1], [−1, 2]], X_2ᵀr_2 = (0, 1),
  // ũ_2 = (2, 6), score (8, 22); M = [[128, 192], [192, 488]]; A·M·A = [[26, −12], [−12, 8]];
  // times (G − 1)/G = 1/2: [[13, −6], [−6, 4]].
  Eigen::MatrixXd j(4, 2);
  j << 1, 0, 1, 1, 1, 2, 1, 3;
  Eigen::VectorXd r(4);
  r << 1, -1, -1, 1;
  const Eigen::MatrixXd v = vzero::detail::cluster_covariance_cr3(j, r, 2, {}, {0, 0, 1, 1}, 2);
  REQUIRE(v.rows() == 2);
  CHECK(v(0, 0) == doctest::Approx(13).epsilon(1e-12));
  CHECK(v(0, 1) == doctest::Approx(-6).epsilon(1e-12));
  CHECK(v(1, 1) == doctest::Approx(4).epsilon(1e-12));
  // With offsets (wells {0, 1} and {2, 3}, each its own cluster) only the slope's within-well
  // part counts: when the second well's x does not vary (2, 2), the first well alone determines
  // the slope, leaving it out leaves it undetermined, and CR3 is refused (empty).
  Eigen::MatrixXd jo(4, 3);
  jo << 0, 1, 0, 1, 1, 0, 2, 0, 1, 2, 0, 1;
  CHECK(vzero::detail::cluster_covariance_cr3(jo, r, 1, {0, 0, 1, 1}, {0, 0, 1, 1}, 2).size() == 0);
}

