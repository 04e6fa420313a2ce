// The ring-by-ring tilted-ring fit (ring_fit.hpp): one small Ceres problem
// per ring, started from the global solution.
// Units: arcsec, degrees (radians inside Ceres), km/s.
#include "fulcrum/kinematics/ring_fit.hpp"
#include "fulcrum/kinematics/quiet_solver_log.hpp"

#include <ceres/ceres.h>

#include <algorithm>
#include <cmath>
#include <numbers>

#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

namespace {
}

std::vector<RingFit> fit_rings_individually(const VelocitySamples& s,
                                            const GlobalFitSummary& global, double w,
                                            const RingFitOptions& opt) {
  std::vector<RingFit> out;
  const auto& g0 = global.geometry;
  const Angle pa0 = g0.pa_deg * degrees, inc0 = g0.inc_deg * degrees;
  const double sin_wedge = std::sin(std::clamp(opt.wedge_deg, 0.0, 89.0) * kRadPerDeg);
  const int N = static_cast<int>(global.nodes.size());
  // Disc coordinates of every sample in the global geometry.
  std::vector<double> R(s.size()), cos_t(s.size());
  for (std::size_t i = 0; i < s.size(); ++i) {
    double X, Y;
    disc_plane(s.east[i], s.north[i], g0.centre.east, g0.centre.north, pa0.cos(), pa0.sin(),
               inc0.cos(), &X, &Y);
    R[i] = std::hypot(X, Y);
    cos_t[i] = R[i] > 0 ? X / R[i] : 0.0;
  }
  for (int k = 0; k < N; ++k) {
    RingFit rf;
    rf.radius_arcsec = global.nodes[k].radius_arcsec;
    rf.width_arcsec = w;
    PixelGroup grp;
    for (std::size_t i = 0; i < s.size(); ++i) {
      if (R[i] < rf.radius_arcsec - 0.5 * w || R[i] >= rf.radius_arcsec + 0.5 * w) continue;
      if (std::abs(cos_t[i]) < sin_wedge) continue;
      grp.east.push_back(s.east[i]);
      grp.north.push_back(s.north[i]);
      grp.velocity.push_back(s.velocity[i]);
      grp.scale.push_back(std::sqrt(std::pow(std::abs(cos_t[i]), opt.weight_power)) / s.sigma[i]);
      grp.index.push_back(i);
    }
    rf.n_pixels = static_cast<int>(grp.size());
    rf.geometry = g0;
    rf.vrot_kms = global.nodes[k].vrot_kms;
    const int n_free = 5 + (opt.free_vsys ? 1 : 0) + (opt.fit_radial ? 1 : 0);
    if (rf.n_pixels < std::max(opt.min_pixels, 2 * n_free)) {
      rf.reason = "too few pixels (" + std::to_string(rf.n_pixels) + ")";
      out.push_back(rf);
      continue;
    }
    double centre[2] = {g0.centre.east, g0.centre.north};
    double pa = g0.pa_deg * kRadPerDeg, inc = g0.inc_deg * kRadPerDeg, vsys = g0.vsys_kms;
    double vrot = rf.vrot_kms, vrad = 0.0;
    ceres::Problem problem;
    auto* cf = new ceres::AutoDiffCostFunction<SingleRingResidual, ceres::DYNAMIC, 2, 1, 1, 1, 1, 1>(
        new SingleRingResidual(&grp), rf.n_pixels);
    problem.AddResidualBlock(cf, nullptr, centre, &pa, &inc, &vsys, &vrot, &vrad);
    if (!opt.free_vsys) problem.SetParameterBlockConstant(&vsys);
    if (!opt.fit_radial) problem.SetParameterBlockConstant(&vrad);
    problem.SetParameterLowerBound(&inc, 0, opt.min_inc_deg * kRadPerDeg);
    problem.SetParameterUpperBound(&inc, 0, opt.max_inc_deg * kRadPerDeg);
    ceres::Solver::Options so;
    so.linear_solver_type = ceres::DENSE_QR;
    so.max_num_iterations = opt.max_iterations;
    so.function_tolerance = 1e-10;
    so.parameter_tolerance = 1e-10;
    so.num_threads = 1;
    so.logging_type = ceres::SILENT;
    ceres::Solver::Summary sum;
    ceres::Solve(so, &problem, &sum);
    rf.geometry.centre = {centre[0], centre[1]};
    rf.geometry.pa_deg = wrap_pa_deg(pa / kRadPerDeg);
    rf.geometry.inc_deg = inc / kRadPerDeg;
    rf.geometry.vsys_kms = vsys;
    rf.vrot_kms = vrot;
    rf.vrad_kms = vrad;
    if (!sum.IsSolutionUsable() || sum.termination_type != ceres::CONVERGENCE) {
      rf.reason = "fit did not converge: " + sum.message;
      out.push_back(rf);
      continue;
    }
    const int dof = rf.n_pixels - n_free;
    rf.reduced_chi2 = 2.0 * sum.final_cost / dof;
    const double f = rf.reduced_chi2 * opt.correlation_factor;
    ceres::Covariance::Options co;
    co.algorithm_type = ceres::DENSE_SVD;
    ceres::Covariance cov(co);
    std::vector<const double*> blocks = {centre, &pa, &inc, &vrot};
    if (opt.free_vsys) blocks.push_back(&vsys);
    if (opt.fit_radial) blocks.push_back(&vrad);
    bool cov_ok = false;
    {
      const QuietSolverLog quiet;  // the failure is reported below, not by the solver
      cov_ok = cov.Compute(blocks, &problem);
    }
    if (!cov_ok) {
      rf.reason = "covariance could not be computed (ring geometry unconstrained)";
      out.push_back(rf);
      continue;
    }
    double c22[4], c11;
    cov.GetCovarianceBlock(centre, centre, c22);
    rf.centre_east_err = std::sqrt(c22[0] * f);
    rf.centre_north_err = std::sqrt(c22[3] * f);
    cov.GetCovarianceBlock(&pa, &pa, &c11);
    rf.pa_err_deg = std::sqrt(c11 * f) / kRadPerDeg;
    cov.GetCovarianceBlock(&inc, &inc, &c11);
    rf.inc_err_deg = std::sqrt(c11 * f) / kRadPerDeg;
    cov.GetCovarianceBlock(&vrot, &vrot, &c11);
    rf.vrot_err_kms = std::sqrt(c11 * f);
    if (opt.free_vsys) {
      cov.GetCovarianceBlock(&vsys, &vsys, &c11);
      rf.vsys_err_kms = std::sqrt(c11 * f);
    }
    if (opt.fit_radial) {
      cov.GetCovarianceBlock(&vrad, &vrad, &c11);
      rf.vrad_err_kms = std::sqrt(c11 * f);
    }
    rf.ok = true;
    out.push_back(rf);
  }
  return out;
}

}  // namespace fulcrum::kinematics
