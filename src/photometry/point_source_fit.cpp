// Least-squares fit of a circular sky Gaussian plus background to one point
// source (see point_source_fit.hpp).
#include "fulcrum/photometry/point_source_fit.hpp"

#include <ceres/ceres.h>

#include <cmath>
#include <numbers>

#include "fulcrum/io/beam.hpp"

namespace fulcrum::photometry {

namespace {

// One pixel's residual. Parameters q = (x0, y0, A, log s, B, gx, gy).
struct PixelResidual {
  PixelResidual(double x, double y, double v, double w, const Eigen::Matrix2d& j)
      : x_(x), y_(y), v_(v), w_(w), j00_(j(0, 0)), j01_(j(0, 1)), j10_(j(1, 0)), j11_(j(1, 1)) {}
  template <class T>
  bool operator()(const T* q, T* r) const {
    const T dx = T(x_) - q[0], dy = T(y_) - q[1];
    const T de = j00_ * dx + j01_ * dy, dn = j10_ * dx + j11_ * dy;
    const T s = exp(q[3]);
    const T m = q[4] + q[5] * dx + q[6] * dy + q[2] * exp(-(de * de + dn * dn) / (T(2) * s * s));
    r[0] = (m - T(v_)) * T(w_);
    return true;
  }
  const double x_, y_, v_, w_, j00_, j01_, j10_, j11_;
};

}  // namespace

PointSourceFit fit_point_source(const std::vector<double>& data, int nx, int ny,
                                const Eigen::Matrix2d& jac, PixelCoord start, double noise_rms,
                                const PointSourceFitOptions& o) {
  PointSourceFit f;
  if (!(noise_rms > 0.0)) {
    f.reason = "no noise level";
    return f;
  }
  const double r = o.radius_pixels;
  const int x0 = std::max(0, static_cast<int>(std::floor(start.x - r)));
  const int x1 = std::min(nx - 1, static_cast<int>(std::ceil(start.x + r)));
  const int y0 = std::max(0, static_cast<int>(std::floor(start.y - r)));
  const int y1 = std::min(ny - 1, static_cast<int>(std::ceil(start.y + r)));
  double q[7] = {start.x, start.y, 0.0, std::log(o.start_fwhm_arcsec / kFwhmPerSigma), 0.0, 0.0, 0.0};
  double vmax = -1e300, vmin = 1e300;
  ceres::Problem problem;
  for (int y = y0; y <= y1; ++y)
    for (int x = x0; x <= x1; ++x) {
      const double v = data[static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y];
      if (!std::isfinite(v) || (x - start.x) * (x - start.x) + (y - start.y) * (y - start.y) > r * r)
        continue;
      vmax = std::max(vmax, v);
      vmin = std::min(vmin, v);
      problem.AddResidualBlock(new ceres::AutoDiffCostFunction<PixelResidual, 1, 7>(
                                   new PixelResidual(x, y, v, 1.0 / noise_rms, jac)),
                               nullptr, q);
      ++f.pixels;
    }
  const int npar = o.fit_plane ? 7 : 5;
  if (f.pixels < npar + 4) {
    f.reason = "too few usable pixels (" + std::to_string(f.pixels) + ") around the source";
    return f;
  }
  q[2] = vmax - vmin;
  q[4] = vmin;
  if (!o.fit_plane) problem.SetManifold(q, new ceres::SubsetManifold(7, {5, 6}));
  ceres::Solver::Options so;
  so.linear_solver_type = ceres::DENSE_QR;
  so.max_num_iterations = o.max_iterations;
  so.num_threads = 1;
  so.logging_type = ceres::SILENT;
  ceres::Solver::Summary sum;
  ceres::Solve(so, &problem, &sum);
  if (!sum.IsSolutionUsable() || sum.termination_type == ceres::NO_CONVERGENCE ||
      !std::isfinite(sum.final_cost)) {
    f.reason = "the point-source fit did not converge";
    return f;
  }
  f.chi2_reduced = 2.0 * sum.final_cost / std::max(f.pixels - npar, 1);
  ceres::Covariance::Options co;
  co.algorithm_type = ceres::DENSE_SVD;
  co.null_space_rank = -1;
  co.num_threads = 1;
  ceres::Covariance cov(co);
  std::vector<std::pair<const double*, const double*>> blocks{{q, q}};
  if (!cov.Compute(blocks, &problem)) {
    f.reason = "the point-source fit's covariance could not be computed";
    return f;
  }
  double c[49];
  cov.GetCovarianceBlockInTangentSpace(q, q, c);
  // In tangent space the held gradients are dropped: index 3 is still log s.
  const double var_logs = c[3 * npar + 3] * std::max(1.0, f.chi2_reduced);
  f.ok = true;
  f.centre = {q[0], q[1]};
  f.amplitude = q[2];
  f.background = q[4];
  f.fwhm_arcsec = kFwhmPerSigma * std::exp(q[3]);
  f.fwhm_err_arcsec = f.fwhm_arcsec * std::sqrt(std::max(var_logs, 0.0));
  return f;
}

}  // namespace fulcrum::photometry
