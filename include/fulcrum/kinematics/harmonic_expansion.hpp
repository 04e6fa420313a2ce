// Harmonic expansion of the velocity along a ring ellipse (Franx, van Gorkom
// & de Zeeuw 1994, ApJ 436, 642; Schoenmakers, Franx & de Zeeuw 1997, MNRAS
// 292, 349):
//
//     v(psi) = c0 + sum_{n=1..3} [ c_n cos(n psi) + s_n sin(n psi) ],
//
// where psi is the disc-plane azimuth of the ring point (the eccentric
// anomaly of the sky ellipse), measured from the receding major axis towards
// PA + 90 deg as in tilted_ring_model.hpp. For a pure circular disc at the
// right geometry only c0 = vsys and c1 = vrot sin i are non-zero.
//
// The coefficients are fitted by weighted linear least squares to the pixels
// of the ring annulus [R - w/2, R + w/2) (each at its own azimuth; their
// small spread in radius is ignored, as usual). The coefficient covariance is
// (A^T W A)^-1 scaled by the ring's reduced chi^2 and the correlated-pixel
// factor (covariance_scaling.hpp). A ring needs pixels on both sides of both
// axes: at least `min_pixels` and a largest azimuth gap below
// `max_gap_deg`, otherwise ok = false.
//
// Units: km/s, arcsec, degrees.
#pragma once

#include <Eigen/Core>
#include <array>
#include <string>

#include "fulcrum/kinematics/global_fit.hpp"

namespace fulcrum::kinematics {

struct HarmonicOptions {
  int min_pixels = 20;
  double max_gap_deg = 60.0;
  double weight_power = 0.0;   // |cos psi|^k weights (0: uniform, the usual choice)
  double correlation_factor = 1.0;
};

struct HarmonicRing {
  double radius_arcsec = 0.0;
  double width_arcsec = 0.0;
  int n_pixels = 0;
  bool ok = false;
  std::string reason;
  // c0, c1, s1, c2, s2, c3, s3 (km/s) and their scaled covariance.
  std::array<double, 7> coeff{};
  Eigen::Matrix<double, 7, 7> covariance = Eigen::Matrix<double, 7, 7>::Zero();
  double reduced_chi2 = 0.0;
  double max_gap_deg = 0.0;

  double c0() const { return coeff[0]; }
  double c1() const { return coeff[1]; }
  double s1() const { return coeff[2]; }
  double c2() const { return coeff[3]; }
  double s2() const { return coeff[4]; }
  double c3() const { return coeff[5]; }
  double s3() const { return coeff[6]; }
  double err(int i) const { return std::sqrt(covariance(i, i)); }
};

// Expand the samples in the annulus [R - w/2, R + w/2) of the given geometry.
HarmonicRing expand_ring(const VelocitySamples& samples, const DiscGeometry& geometry,
                         double radius_arcsec, double width_arcsec,
                         const HarmonicOptions& options);

}  // namespace fulcrum::kinematics
