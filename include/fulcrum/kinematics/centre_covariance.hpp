// The covariance of the global tilted-ring geometry (centre, PA,
// inclination, vsys) from the residuals of the fit: a sandwich estimator with
// the measured residual correlation (docs/uncertainties.md §3).
//
// The fit minimises sum_i w_i (v_i - m_i(p))^2 with w_i = |cos theta_i|^k /
// sigma_i^2. With J the Jacobian dm/dp at the solution and A = J^T W J, a
// small change of the data dv moves the parameters by dp = A^-1 J^T W dv, so
// for data noise of covariance S
//     Cov(p) = A^-1 J^T W S W J A^-1           (the sandwich; Huber 1967,
//                                                White 1980, Econometrica 48, 817)
// which equals the formal A^-1 only when W = S^-1 (independent pixels, k = 0,
// right sigmas). Here S_ij = c^2 sigma_i sigma_j rho(d_ij) with
//   rho   the residual correlation measured on the map
//         (residual_correlation.hpp), never narrower than the beam;
//   c^2   the residual scale sum z^2 / E0[sum z^2], z = (v - m)/sigma,
//         E0 the expectation for noise exactly as stated (the sigmas with
//         the noise model's correlation), computed for this estimator by a
//         trace formula (N - p for independent pixels; about N - p eta for
//         correlated noise and smooth parameters; at least N/10); with an
//         error map never below 1 (the fit is inflated when it does not fit,
//         never deflated).
// Only the geometry rows of A^-1 are needed: with u_i = w_i J_i A^-1[:, geom],
// Cov(geom) = sum_ij u_i^T S_ij u_j, summed over neighbours within 4 sigma
// of the correlation on the pixel grid.
//
// The result is split into terms (2x2 on (east, north), arcsec^2):
//   statistical    the sandwich with the stated sigmas (c = 1) and the noise
//                  model's correlation for the beam (noise white before the
//                  beam, s = sqrt 2, imaging/noise_correlation.hpp); without an error map
//                  the residual scale c is used (then "statistical" holds all
//                  of the pixel scatter);
//   model_misfit   what c^2 > 1 and a measured correlation wider than the
//                  noise model's add (the difference, its negative part
//                  dropped);
// and method_spread is added by method_spread.hpp.
//
// The Jacobian is evaluated here (central differences in the geometry,
// exact in the node speeds) at the final geometry, with the weights of the
// final geometry; robust-loss reweighting is not included. Units: arcsec,
// degrees, km/s.
//
// With the beam-smearing correction (beam_smearing.hpp) the fit is the fixed
// point of refits to v - Delta(p), Delta = S m - m with S the (linear)
// moment-1 smearing, i.e. J^T W (v - S m(p)) = 0. A change dv then moves the
// parameters by dp = (J^T W S J)^-1 J^T W dv: the bread of the sandwich is
// A_s = J^T W J_s with J_s = S J, each Jacobian column evaluated on the
// smearing grid and smeared like the model (the smearing flattens the
// velocity gradients that fix the centre, so A_s is "smaller" than A and the
// covariance larger), and Cov(p) = A_s^-1 J^T W S W J A_s^-T at the fixed
// point. The fit stops after K refits, though (beam_smearing.refits), and the
// noise sensitivity of K refits is not that of the fixed point: linearised,
// dp_0 = A^-1 J^T W dv (the uncorrected fit) and dp_{k+1} = A^-1 J^T W (dv -
// (S - I) J dp_k), so dp_K = G_K J^T W dv with
//     G_0 = A^-1,   G_{k+1} = A^-1 - M G_k,   M = A^-1 (A_s - A),
// the partial sums of the series whose limit is A_s^-1. The bread is G_K:
// the covariance of the estimator as it was computed.
#pragma once

#include <Eigen/Core>
#include <string>

#include "fulcrum/kinematics/global_fit.hpp"
#include "fulcrum/kinematics/residual_correlation.hpp"

namespace fulcrum::kinematics {

struct SmearingGrid;  // beam_smearing.hpp

struct GeometryCovarianceOptions {
  double weight_power = 1.0;
  bool fix_centre = false, fix_pa = false, fix_inc = false, fix_vsys = false;
  bool radial = false;           // the fit has radial speeds per node
  double reach_sigma = 4.0;      // neighbour sums out to this many correlation sigmas
  // The beam-smearing correction was applied on this grid (its samples are
  // the fitted samples, in order): the bread uses the smeared Jacobian.
  const SmearingGrid* smearing = nullptr;
  int smearing_refits = 0;       // K, the refits the correction made
  // E0[sum z^2] / N when it is known already (> 0): mocks of one fitted disc
  // share the data fit's value instead of each computing it (the trace
  // formula is most of the covariance's cost); 0: computed here.
  double expected_residual_fraction = 0.0;
  ResidualCorrelationOptions correlation;
};

using Matrix5d = Eigen::Matrix<double, 5, 5>;

struct GeometryCovariance {
  bool ok = false;
  std::string reason;              // why not ok
  Matrix5d formal = Matrix5d::Zero();       // A^-1 (ce, cn, pa, inc, vsys), unscaled
  Matrix5d statistical = Matrix5d::Zero();  // sandwich, stated sigmas, beam-model correlation
  Matrix5d total = Matrix5d::Zero();        // sandwich, c^2 and the measured correlation
  double residual_scale2 = 1.0;    // c^2 adopted
  double residual_scale2_measured = 1.0;
  double effective_dof = 0.0;      // E0[sum z^2] (at least N / 10)
  ResidualCorrelation correlation; // measured on the residuals
  double model_correlation_scale = 1.0;  // s of the noise model (sqrt 2)
  int n_used = 0, n_parameters = 0;
  bool smeared_jacobian = false;   // the bread is J^T W S J (beam-smearing correction)
  // The model_misfit part of `total` (total - statistical, negative part dropped), 2x2 centre.
  Eigen::Matrix2d centre_misfit() const;
};

// `samples` are the velocities the global fit `fit` was fitted to.
GeometryCovariance geometry_covariance(const VelocitySamples& samples, const GlobalFitSummary& fit,
                                       const GeometryCovarianceOptions& options);

// Sum over neighbour pairs of u_i^T rho_ij u_j (u: one 5-vector per sample,
// zero where unused), with `corr` on the grid, out to reach_sigma. Exposed
// for tests.
Matrix5d correlated_outer_sum(const SampleGrid& grid, const std::vector<Eigen::Matrix<double, 5, 1>>& u,
                              const NoiseCorrelation& corr, double reach_sigma);

// The positive part of a symmetric 2x2 matrix (negative eigenvalues set to 0).
Eigen::Matrix2d positive_part(const Eigen::Matrix2d& m);

}  // namespace fulcrum::kinematics
