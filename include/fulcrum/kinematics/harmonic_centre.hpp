// The harmonic centre: the centre about which the velocity along every ring
// has no second-order harmonic terms (Franx, van Gorkom & de Zeeuw 1994;
// Schoenmakers, Franx & de Zeeuw 1997). A second dynamical estimate, found
// independently of the tilted-ring centre (only PA and inclination are
// shared).
//
// Derivation (from the tilted-ring model, docs/kinematics.md §4). Let the
// true centre be c and the assumed one c + delta, delta = a e_maj + b e_min
// (e_maj towards PA, e_min towards PA + 90 deg, arcsec). The ring point of
// azimuth psi about the assumed centre has true disc coordinates
//     X = R cos psi + a,   Y = R sin psi + b / cos i,
// and v - vsys = sin i * f(X, Y) with f = vc(R') X / R'. To first order,
//     df/dX = vc' cos^2 psi + (vc/R) sin^2 psi,
//     df/dY = (vc' - vc/R) sin psi cos psi,
// so the velocity along the assumed ring is
//     v = vsys + vc sin i cos psi
//         + sin i * a [ (vc' + vc/R)/2 + (vc' - vc/R)/2 cos 2psi ]
//         + sin i * (b / cos i) (vc' - vc/R)/2 sin 2psi.
// A centre error therefore adds a constant (absorbed by vsys) and the
// second harmonics
//     c2 = D a,   s2 = D b / cos i,   D = (c1' - c1 / R) / 2,
// with c1 = vc sin i the first harmonic and c1' its radial derivative. It
// adds nothing at odd orders to first order (odd terms come from PA and
// inclination errors). Where the rotation is solid-body (c1' = c1/R), D = 0:
// a shifted linear velocity field is the same field plus a constant, and no
// method can see the centre there.
//
// Algorithm: at the current centre expand every ring (harmonic_expansion.hpp),
// estimate D_k from c1 (finite differences between rings), solve the weighted
// least squares for (a, b) from the rings' (c2, s2) and their errors, move the
// centre by -(a e_maj + b e_min), repeat until the step is below `tolerance`.
// The covariance of (a, b) is the least-squares one, scaled by the reduced
// chi^2 of the rings' second harmonics about zero when that is above 1, and
// rotated to (east, north).
//
// Caveat (Schoenmakers et al. 1997): an m = 1 (lopsided) perturbation of the
// potential also produces m = 0 and m = 2 terms in the velocity field, so the
// harmonic centre absorbs lopsided streaming; compare it with the tilted-ring
// centre.
//
// Units: arcsec (east, north offsets from the reference), degrees, km/s.
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "fulcrum/kinematics/harmonic_expansion.hpp"

namespace fulcrum::kinematics {

struct HarmonicCentreOptions {
  HarmonicOptions expansion;
  double ring_width_arcsec = 1.0;
  double min_radius_arcsec = 0.0;   // rings below are not used (beam smearing)
  double max_radius_arcsec = 10.0;
  int max_iterations = 30;
  double tolerance_arcsec = 1e-4;
  int min_rings = 3;
};

struct HarmonicCentreSummary {
  bool ok = false;
  std::string reason;
  SkyOffset centre;                 // arcsec from the reference
  Eigen::Matrix2d covariance = Eigen::Matrix2d::Zero();  // (east, north) arcsec^2
  int iterations = 0;
  int rings_used = 0;
  double reduced_chi2 = 0.0;        // of (c2, s2) about zero at the solution
  std::vector<HarmonicRing> rings;  // expansion about the final centre
};

// `geometry` gives PA, inclination and vsys; its centre is the start.
HarmonicCentreSummary fit_harmonic_centre(const VelocitySamples& samples,
                                          const DiscGeometry& geometry,
                                          const HarmonicCentreOptions& options);

}  // namespace fulcrum::kinematics
