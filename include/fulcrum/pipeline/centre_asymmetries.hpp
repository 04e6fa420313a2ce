// A at each kind of centre, as a paper's robustness appendix quotes it: at
// the kinematic centre (tilted rings, else the harmonic expansion), at the
// optical centre (the first successful photometric centre in the order of
// preference of the adopted-centre rule, pipeline/adopted_centre.hpp) and at
// every external centre (`centre_from`). Each A comes with its 1-sigma error
// from the map noise about that centre (split/half_split.hpp); the halves are
// split at the nominal tail PA.
//
// An undetermined galaxy has no A anywhere: its values are empty, never
// numbers that look like results.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "fulcrum/pipeline/galaxy_summary.hpp"

namespace fulcrum::pipeline {

struct AsymmetryAt {
  std::string id;              // Centre::id()
  double asymmetry = 0.0;      // A = (L - T)/(L + T)
  double asymmetry_err = 0.0;  // 1-sigma, map noise (NaN when no noise is known)
};

struct CentreAsymmetries {
  std::optional<AsymmetryAt> kinematic, optical;
  std::vector<AsymmetryAt> external;  // in the order given
};

CentreAsymmetries centre_asymmetries(const GalaxySummary& s);

// One sentence: A at each kind of centre, whether its sign differs from A at
// the adopted centre, and how far the centre must move from the adopted one
// to change the sign, e.g.
//   "At the kinematic centre A = +0.037 +- 0.010; at the optical centre
//    (photometric-profile) A = -0.220 +- 0.010, the opposite sign; the sign
//    changes 0.29 arcsec (0.18 beam) from the adopted centre towards PA 300
//    deg."
// Empty for an undetermined galaxy.
std::string centre_sentence(const GalaxySummary& s);

}  // namespace fulcrum::pipeline
