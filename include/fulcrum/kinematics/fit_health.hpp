// Checks that turn a converged but degenerate tilted-ring fit into a failure
// with a reason, instead of an answer with meaningless error bars.
//
//  * covariance_problem: the geometry covariance could not be computed (the
//    Jacobian is rank deficient), has a non-positive or non-finite variance,
//    or is near-singular: the smallest eigenvalue of its correlation matrix
//    is below 1e-8 (two parameters correlated beyond |r| = 1 - 5e-9, so
//    that data cannot tell them apart; our threshold).
//  * limit_problem: the inclination sits within 0.5 deg of a bound of the
//    fit (GlobalFitOptions min_inc_deg / max_inc_deg), or the centre left the
//    region the rings cover (farther from the first-guess centre than the
//    outer radius).
//  * smearing_problem: the beam-smearing correction (beam_smearing.hpp) is
//    larger than the whole projected rotation, max |Delta| > f * max_k
//    |vrot_k| sin i with f = 1 by default. A beam only averages velocities
//    the disc has, so near the centre |Delta| approaches but cannot exceed
//    the projected amplitude; a larger one means the model the correction
//    was computed from is wrong (our bound).
// Each returns "" when there is nothing wrong. Units: arcsec, deg, km/s.
#pragma once

#include <string>

#include "fulcrum/kinematics/global_fit.hpp"

namespace fulcrum::kinematics {

std::string covariance_problem(const GlobalFitSummary& fit, const GlobalFitOptions& options);
std::string limit_problem(const GlobalFitSummary& fit, const GlobalFitOptions& options,
                          SkyOffset first_guess_centre);
std::string smearing_problem(const GlobalFitSummary& fit, double max_abs_correction_kms,
                             double fraction);

}  // namespace fulcrum::kinematics
