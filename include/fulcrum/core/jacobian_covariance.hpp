// The covariance of a least-squares fit from its Jacobian at the solution:
// the Moore-Penrose inverse of J^T J, with directions whose singular value
// of J is below sqrt(min_reciprocal_condition) of the largest dropped (the
// rule of Ceres's DENSE_SVD covariance with automatic truncation, whose
// default threshold 1e-14 this takes). J (rows = residuals, columns =
// parameters) is reduced by a Householder QR first, and only the small
// triangle is decomposed: the cost is O(rows x columns^2), and no basis of
// the residual space is formed (the "R-SVD" route for tall matrices and the
// pseudo-inverse through the SVD: Golub & Van Loan, Matrix Computations,
// chapter 5; recalled from memory). The units are those of the parameters
// squared, for residuals scaled to unit variance.
#pragma once

#include <Eigen/Core>
#include <vector>

namespace ceres {
class Problem;
}

namespace fulcrum {

struct JacobianCovariance {
  bool ok = false;       // false when J has no rows, fewer rows than columns or a non-finite entry
  Eigen::MatrixXd cov;   // columns x columns
  int rank = 0;          // directions kept
  Eigen::VectorXd singular_values;  // of J, decreasing
  // Whether J has full column rank by SuiteSparseQR's default rule (its
  // rank tolerance 20 (rows + columns) x machine epsilon x the largest column
  // norm of J, applied here to the smallest singular value): the test behind
  // Ceres's SPARSE_QR covariance, which refuses a rank-deficient problem.
  bool full_rank_by_default_tolerance = false;
};

JacobianCovariance covariance_from_jacobian(const Eigen::Ref<const Eigen::MatrixXd>& jacobian,
                                            double min_reciprocal_condition = 1e-14);

// The Jacobian of a Ceres problem's residuals at its current parameters with
// respect to `blocks` (their columns in that order), dense; empty when the
// problem cannot be evaluated there.
Eigen::MatrixXd problem_jacobian(ceres::Problem& problem, const std::vector<double*>& blocks);

}  // namespace fulcrum
