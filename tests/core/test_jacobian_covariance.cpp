// The covariance from a Jacobian (core/jacobian_covariance.hpp) against the
// textbook straight-line fit (Press et al., Numerical Recipes, 3rd ed.,
// section 15.2: with unit errors Var(b) = 1/S_xx, Var(a) = sum x^2 / (n S_xx),
// Cov(a, b) = -mean(x) / S_xx; recalled from memory) and, for a rank-deficient
// Jacobian, against Eigen's complete orthogonal decomposition
// (pseudoInverse of J^T J), an independent route to the Moore-Penrose inverse;
// on a non-linear fit, against Ceres's own covariance (SPARSE_QR and
// DENSE_SVD), which the fits used before.
#include <catch2/catch.hpp>

#include <ceres/ceres.h>

#include <Eigen/QR>
#include <cmath>
#include <limits>

#include "fulcrum/core/jacobian_covariance.hpp"

using namespace fulcrum;

TEST_CASE("Jacobian covariance of a straight-line fit is the textbook one", "[core][statistics]") {
  const int n = 10;
  Eigen::MatrixXd j(n, 2);
  double sx = 0, sxx = 0;
  for (int i = 0; i < n; ++i) {
    const double x = 0.5 * i - 1.0;
    j(i, 0) = 1.0;
    j(i, 1) = x;
    sx += x;
    sxx += x * x;
  }
  const double mean = sx / n, s_xx = sxx - n * mean * mean;
  const JacobianCovariance c = covariance_from_jacobian(j);
  REQUIRE(c.ok);
  CHECK(c.rank == 2);
  CHECK(c.full_rank_by_default_tolerance);
  CHECK(c.cov(1, 1) == Approx(1.0 / s_xx).epsilon(1e-12));
  CHECK(c.cov(0, 0) == Approx(sxx / (n * s_xx)).epsilon(1e-12));
  CHECK(c.cov(0, 1) == Approx(-mean / s_xx).epsilon(1e-12));
  CHECK(c.cov(1, 0) == Approx(c.cov(0, 1)).epsilon(1e-14));
}

TEST_CASE("Jacobian covariance of a rank-deficient fit is the pseudo-inverse", "[core][statistics]") {
  // Two identical columns (a parameter the data cannot tell from another):
  // one direction is dropped and the rest is the Moore-Penrose inverse.
  const int n = 12;
  Eigen::MatrixXd j(n, 3);
  for (int i = 0; i < n; ++i) {
    const double x = std::sin(0.7 * i) + 0.1 * i;
    j(i, 0) = 1.0;
    j(i, 1) = x;
    j(i, 2) = x;
  }
  const JacobianCovariance c = covariance_from_jacobian(j);
  REQUIRE(c.ok);
  CHECK(c.rank == 2);
  CHECK_FALSE(c.full_rank_by_default_tolerance);
  const Eigen::MatrixXd normal = j.transpose() * j;
  const Eigen::MatrixXd ref = normal.completeOrthogonalDecomposition().pseudoInverse();
  for (int a = 0; a < 3; ++a)
    for (int b = 0; b < 3; ++b) CHECK(c.cov(a, b) == Approx(ref(a, b)).margin(1e-10));
}

TEST_CASE("Jacobian covariance refuses too few rows and non-finite entries", "[core][statistics]") {
  CHECK_FALSE(covariance_from_jacobian(Eigen::MatrixXd::Ones(2, 3)).ok);
  Eigen::MatrixXd j = Eigen::MatrixXd::Identity(4, 2);
  j(3, 1) = std::numeric_limits<double>::quiet_NaN();
  CHECK_FALSE(covariance_from_jacobian(j).ok);
  CHECK_FALSE(covariance_from_jacobian(Eigen::MatrixXd(0, 0)).ok);
}

namespace {
// y = a exp(b x) + c with unit errors.
struct ExpResidual {
  double x, y;
  template <typename T>
  bool operator()(const T* q, T* r) const {
    r[0] = q[0] * exp(q[1] * x) + q[2] - y;
    return true;
  }
};
}  // namespace

TEST_CASE("Jacobian covariance of a non-linear fit equals Ceres's covariance", "[core][statistics]") {
  double q[3] = {2.0, -0.3, 0.5};
  ceres::Problem problem;
  for (int i = 0; i < 25; ++i) {
    const double x = 0.4 * i, y = 2.0 * std::exp(-0.3 * x) + 0.5 + 0.01 * std::sin(3.0 * i);
    problem.AddResidualBlock(new ceres::AutoDiffCostFunction<ExpResidual, 1, 3>(new ExpResidual{x, y}), nullptr, q);
  }
  ceres::Solver::Options so;
  so.logging_type = ceres::SILENT;
  ceres::Solver::Summary sum;
  ceres::Solve(so, &problem, &sum);
  const Eigen::MatrixXd j = problem_jacobian(problem, {q});
  REQUIRE(j.rows() == 25);
  REQUIRE(j.cols() == 3);
  const JacobianCovariance c = covariance_from_jacobian(j);
  REQUIRE(c.ok);
  CHECK(c.full_rank_by_default_tolerance);
  for (auto algorithm : {ceres::SPARSE_QR, ceres::DENSE_SVD}) {
    ceres::Covariance::Options co;
    co.algorithm_type = algorithm;
    ceres::Covariance cov(co);
    std::vector<std::pair<const double*, const double*>> blocks{{q, q}};
    REQUIRE(cov.Compute(blocks, &problem));
    double ref[9];
    cov.GetCovarianceBlock(q, q, ref);
    for (int a = 0; a < 3; ++a)
      for (int b = 0; b < 3; ++b) CHECK(c.cov(a, b) == Approx(ref[3 * a + b]).epsilon(1e-9));
  }
}
