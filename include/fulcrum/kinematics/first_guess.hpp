// First guesses of the disc geometry from the velocity field alone.
//
//  * centre: centroid of the footprint (the finite pixels, unweighted);
//  * vsys: median velocity;
//  * PA: the direction of steepest velocity increase, from a plane
//    v = a + b*east + c*north fitted by least squares about the centroid:
//    the receding side lies towards PA = atan2(b, c) (north through east);
//  * inclination: from the footprint's axis ratio q = sqrt(l_min / l_max) of
//    its second-moment matrix, inc = acos(q), kept within [20, 80] deg
//    (a footprint cut by noise or holes is a rough ellipse);
//  * outer radius: the 98th percentile of the deprojected radius.
// Each can be overridden by the caller (KinematicOptions).
//
// Units: arcsec, degrees, km/s.
#pragma once

#include "fulcrum/kinematics/velocity_samples.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::kinematics {

struct FirstGuess {
  SkyOffset centre;           // arcsec from the samples' reference
  double pa_deg = 0.0;        // receding half, north through east, [0, 360)
  double inc_deg = 50.0;
  double vsys_kms = 0.0;
  double max_radius_arcsec = 0.0;
  double gradient_kms_per_arcsec = 0.0;  // size of the fitted plane's gradient
  double axis_ratio = 1.0;               // footprint b/a
  // Size of the plane's gradient over its formal error (residual scatter
  // about the plane, pixels taken as independent): divide by sqrt(eta) of
  // covariance_scaling.hpp for correlated pixels.
  double gradient_snr = 0.0;
};

FirstGuess first_guess(const VelocitySamples& samples);

// The deprojected radius (arcsec) that contains `fraction` of the samples
// for the given geometry.
double radius_quantile(const VelocitySamples& samples, SkyOffset centre, double pa_deg,
                       double inc_deg, double fraction);

}  // namespace fulcrum::kinematics
