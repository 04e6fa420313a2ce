// The ring-by-ring tilted-ring fit: every ring gets its own centre, PA,
// inclination and rotation speed (Begeman 1989), so that a warp or a centre
// that drifts with radius is visible.
//
// Ring k covers the deprojected radii [R_k - w/2, R_k + w/2) of the global
// geometry (R_k = k * w, the global fit's nodes); its pixels are fixed by
// that geometry and weighted as in the global fit (|cos theta|^k / sigma^2,
// minor-axis wedge excluded). vsys is held at the global value unless
// `free_vsys`; vrad is fitted only with `fit_radial`. Each ring's covariance
// is scaled like the global one (covariance_scaling.hpp), with its own
// reduced chi^2. A ring with too few pixels, or one whose fit does not
// converge, is reported with ok = false and the reason.
//
// Units: arcsec (centre offsets east, north from the reference), degrees,
// km/s.
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "fulcrum/kinematics/global_fit.hpp"

namespace fulcrum::kinematics {

struct RingFitOptions {
  bool free_vsys = false;
  bool fit_radial = false;
  double weight_power = 1.0;
  double wedge_deg = 15.0;
  double correlation_factor = 1.0;
  int min_pixels = 20;             // fewer: the ring is not fitted
  double min_inc_deg = 5.0, max_inc_deg = 85.0;
  int max_iterations = 50;
};

struct RingFit {
  double radius_arcsec = 0.0;
  double width_arcsec = 0.0;
  int n_pixels = 0;
  bool ok = false;
  std::string reason;             // why not ok
  DiscGeometry geometry;
  double vrot_kms = 0.0, vrad_kms = 0.0;
  // Scaled 1-sigma errors.
  double centre_east_err = 0.0, centre_north_err = 0.0;  // arcsec
  double pa_err_deg = 0.0, inc_err_deg = 0.0, vsys_err_kms = 0.0;
  double vrot_err_kms = 0.0, vrad_err_kms = 0.0;
  double reduced_chi2 = 0.0;
};

std::vector<RingFit> fit_rings_individually(const VelocitySamples& samples,
                                            const GlobalFitSummary& global,
                                            double ring_width_arcsec, const RingFitOptions& options);

}  // namespace fulcrum::kinematics
