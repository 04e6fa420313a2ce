// The global tilted-ring fit: one centre, PA, inclination and systemic
// velocity common to the whole disc, and a rotation speed per ring node
// (optionally a radial speed too). This is the dynamical centre.
//
// Model and parametrisation: tilted_ring_model.hpp. Rings are nodes R_k =
// k * ring_width (k = 1..N, node 0 at R = 0 with zero speed) and vrot(R) is
// linear between nodes. Pixels beyond the outer node or inside the exclusion
// wedge |theta -/+ 90 deg| < wedge about the minor axis are left out; the rest
// have weight |cos theta|^k / sigma^2 (Begeman 1989 uses such weights to
// favour the major axis, where a pixel says most about the rotation).
//
// The fit runs in passes: at the start of each pass the geometry fixes which
// pixels are used, their brackets and weights (and, with a robust loss, the
// iteratively reweighted factors), then Ceres' Levenberg-Marquardt solves that
// fixed problem. Passes repeat until the pixel set and brackets stop
// changing and the geometry moves by less than the tolerances. The first pass
// holds the inclination at its first guess (the least constrained parameter),
// later ones free it (GlobalFitOptions::hold_inc_first_pass).
//
// Units: arcsec, degrees (radians inside Ceres), km/s. Centre offsets are
// (east, north) arcsec from the samples' reference.
#pragma once

#include <Eigen/Core>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/kinematics/covariance_scaling.hpp"
#include "fulcrum/kinematics/velocity_samples.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::kinematics {

enum class RobustLoss { none, huber, cauchy };

// The disc geometry, in the units people read.
struct DiscGeometry {
  SkyOffset centre;   // arcsec from the reference
  double pa_deg = 0.0;
  double inc_deg = 45.0;
  double vsys_kms = 0.0;
};

// Gaussian priors on the geometry: for each error given, a term
// ((x - mean) / err)^2 joins chi^2 (a 2-D one, per axis, for the centre).
// The term's residual is multiplied by sqrt(correlation_factor) so that the
// prior keeps its stated width after the covariance is inflated by eta
// (covariance_scaling.hpp); the reduced-chi^2 inflation, known only after the
// fit, widens it like the data's (a stated approximation).
struct GeometryPrior {
  DiscGeometry mean;
  std::optional<double> centre_err_arcsec, pa_err_deg, inc_err_deg, vsys_err_kms;
  bool any() const { return centre_err_arcsec || pa_err_deg || inc_err_deg || vsys_err_kms; }
};

struct GlobalFitOptions {
  double ring_width_arcsec = 1.0;   // node spacing (about half a beam)
  double max_radius_arcsec = 10.0;  // outer node is the last k * width <= this
  double min_radius_arcsec = 0.0;   // pixels inside are left out (beam smearing)
  double weight_power = 1.0;        // k in |cos theta|^k
  double wedge_deg = 15.0;          // half-opening of the excluded wedge about the minor axis
  bool fit_radial = false;
  bool fix_centre = false, fix_pa = false, fix_inc = false, fix_vsys = false;
  RobustLoss loss = RobustLoss::none;
  double loss_scale = 2.0;          // in units of the robust residual scale
  double correlation_factor = 1.0;  // eta of covariance_scaling.hpp
  double min_inc_deg = 5.0, max_inc_deg = 85.0;
  int max_passes = 6;
  // Hold the inclination at its start value in the first pass (when there
  // are more than two passes); a refit that starts from a converged geometry
  // (the beam-smearing correction) turns this off.
  bool hold_inc_first_pass = true;
  // Start values of the node speeds vrot_1..N (and vrad_1..N) in km/s, used
  // when they have one value per node; otherwise the speeds are first
  // guessed from the data (medians near each node).
  std::vector<double> start_vrot, start_vrad;
  int max_iterations = 100;         // per pass
  double function_tolerance = 1e-20;  // effectively: stop on the parameter tolerance
  double parameter_tolerance = 1e-14;
  double gradient_tolerance = 1e-14;
  bool record_problem = false;      // keep the last pass's problem (for cross-checks)
  bool compute_covariance = true;   // false: no covariance (covariance_ok stays false; the scouts)
  GeometryPrior prior;
};

// The fixed least-squares problem of the last pass, for an independent
// re-solution (tests/python): residual_i = scale_i * (v_i - model_i) with the
// pixel's bracket (node indices lo, lo + 1) and the node radii.
struct RecordedProblem {
  std::vector<double> east, north, velocity, scale;
  std::vector<int> bracket;         // lower node index, 0..N-1
  std::vector<double> node_radius;  // node 0 = 0
  bool radial = false;
  // Parameters at the start and the end of the pass: ce, cn, pa(rad),
  // inc(rad), vsys, vrot_1..N [, vrad_1..N].
  std::vector<double> start, solution;
};

struct RingNode {
  double radius_arcsec = 0.0;
  double vrot_kms = 0.0, vrot_err_kms = 0.0;
  double vrad_kms = 0.0, vrad_err_kms = 0.0;
  int n_pixels = 0;  // pixels bracketed by this node and the one inside it
};

struct GlobalFitSummary {
  bool converged = false;
  // The last pass ran out of iterations: its solution is usable but not
  // converged (a later fit started from it carries on from there).
  bool stopped_at_iteration_limit = false;
  bool covariance_ok = false;
  std::string message;        // Ceres' termination message of the last pass
  DiscGeometry geometry;
  // Covariance of (centre east, centre north, pa, inc, vsys) in arcsec,
  // degrees and km/s, already scaled (covariance_scaling.hpp).
  Eigen::Matrix<double, 5, 5> covariance = Eigen::Matrix<double, 5, 5>::Zero();
  std::vector<RingNode> nodes;  // k = 1..N
  CovarianceScaling scaling;
  double chi2 = 0.0;            // weighted, of the last pass
  double residual_rms_kms = 0.0;  // unweighted rms of the used pixels
  int n_used = 0;
  int n_parameters = 0;
  int passes = 0;
  int iterations = 0;           // summed over passes
  std::vector<unsigned char> used;  // per sample: used in the last pass
  RecordedProblem problem;      // filled when options.record_problem

  Eigen::Matrix2d centre_covariance() const { return covariance.topLeftCorner<2, 2>(); }
};

// Fit `samples` starting from `start` (first guesses). Never throws for bad
// data: failure is reported in the summary (converged = false, message).
GlobalFitSummary fit_global_rings(const VelocitySamples& samples, const DiscGeometry& start,
                                  const GlobalFitOptions& options);

// Rotation speed of the fitted piecewise-linear curve at radius R (zero at
// R = 0, linear between nodes, the outer node's value beyond it).
double rotation_at(const std::vector<RingNode>& nodes, double radius_arcsec, bool radial = false);

// Model velocity (km/s) at a sky offset for a fitted global model.
double global_model_velocity(const GlobalFitSummary& fit, double east, double north);

}  // namespace fulcrum::kinematics
