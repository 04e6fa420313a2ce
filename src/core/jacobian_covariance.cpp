// Covariance from a Jacobian: QR of J, then the SVD of the triangle R
// (J = Q R, so J and R have the same singular values and right vectors).
#include "fulcrum/core/jacobian_covariance.hpp"

#include <ceres/ceres.h>

#include <Eigen/QR>
#include <Eigen/SVD>
#include <cmath>
#include <limits>

namespace fulcrum {

JacobianCovariance covariance_from_jacobian(const Eigen::Ref<const Eigen::MatrixXd>& jacobian,
                                            double min_reciprocal_condition) {
  JacobianCovariance out;
  const Eigen::Index n = jacobian.cols();
  if (n == 0 || jacobian.rows() < n || !jacobian.allFinite()) return out;
  const Eigen::HouseholderQR<Eigen::MatrixXd> qr(jacobian);
  const Eigen::MatrixXd r = qr.matrixQR().topRows(n).triangularView<Eigen::Upper>();
  const Eigen::JacobiSVD<Eigen::MatrixXd> svd(r, Eigen::ComputeFullV);
  const Eigen::VectorXd& s = svd.singularValues();  // decreasing
  const double min_ratio = std::sqrt(min_reciprocal_condition);
  Eigen::VectorXd inv_s2 = Eigen::VectorXd::Zero(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    if (!(s[i] > 0.0) || s[i] / s[0] < min_ratio) break;
    inv_s2[i] = 1.0 / (s[i] * s[i]);
    ++out.rank;
  }
  out.cov = svd.matrixV() * inv_s2.asDiagonal() * svd.matrixV().transpose();
  out.singular_values = s;
  const double tol = 20.0 * static_cast<double>(jacobian.rows() + n) * std::numeric_limits<double>::epsilon() *
                     jacobian.colwise().norm().maxCoeff();
  out.full_rank_by_default_tolerance = s[n - 1] > tol;
  out.ok = true;
  return out;
}

Eigen::MatrixXd problem_jacobian(ceres::Problem& problem, const std::vector<double*>& blocks) {
  ceres::Problem::EvaluateOptions eo;
  eo.parameter_blocks = blocks;
  eo.num_threads = 1;
  ceres::CRSMatrix crs;
  double cost = 0.0;
  if (!problem.Evaluate(eo, &cost, nullptr, nullptr, &crs)) return {};
  Eigen::MatrixXd jac = Eigen::MatrixXd::Zero(crs.num_rows, crs.num_cols);
  for (int r = 0; r < crs.num_rows; ++r)
    for (int k = crs.rows[r]; k < crs.rows[r + 1]; ++k) jac(r, crs.cols[k]) = crs.values[k];
  return jac;
}

}  // namespace fulcrum
