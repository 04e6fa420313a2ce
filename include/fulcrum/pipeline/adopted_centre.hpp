// The adopted-centre rule: which centre estimate the halves are split about
// (DESIGN.md section 5).
//
//   1. the kinematic tilted-ring centre when that fit succeeded;
//   2. otherwise the kinematic harmonic centre when it succeeded;
//   3. otherwise the first successful photometric centre in the documented
//      order of preference: profile fit, centroid, isophote, symmetry, peak
//      (the profile fit models the whole light distribution and has a fit
//      covariance; the peak is the most sensitive to dust and star-forming
//      knots);
//   4. otherwise none: the centre is undetermined, with the reason.
// An external centre is never adopted by this rule (it is a plausible
// centre only).
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/sky/centre.hpp"

namespace fulcrum::pipeline {

struct AdoptedCentre {
  std::optional<std::size_t> index;  // into the estimates; nullopt: undetermined
  std::string reason;                // why this one (or why none)
};

// The photometric methods in order of preference.
const std::vector<CentreMethod>& photometric_preference();

// `no_optical` adds "no optical image given" to the reason when nothing succeeded.
AdoptedCentre adopt_centre(const std::vector<Centre>& estimates, bool no_optical);

}  // namespace fulcrum::pipeline
