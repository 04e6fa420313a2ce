// A centre estimate of a galaxy: one type for every method that finds a
// centre (kinematic tilted rings, kinematic harmonic expansion, the
// photometric estimators, a centre given from outside) and for every stage
// that uses one (adopted-centre choice, split, robustness, calibration,
// reports).
//
// Units and conventions: `position` is RA/Dec in degrees (ICRS, as the map's
// WCS gives it); `covariance` is 2x2 in arcsec^2 on (east, north) offsets
// about the position; `pixel_fits` is the position on the map it was
// measured on, in FITS pixels (first pixel centre = 1.0). A centre whose
// status is `failed` carries no numbers, only its reason.
#pragma once

#include <Eigen/Core>
#include <optional>
#include <string>

#include "fulcrum/io/wcs.hpp"

namespace fulcrum {

enum class CentreMethod {
  kinematic_rings,       // global tilted-ring fit of the velocity map
  kinematic_harmonic,    // harmonic expansion of the velocity map
  photometric_profile,   // Sersic profile fit on the optical image
  photometric_centroid,
  photometric_isophote,
  photometric_symmetry,
  photometric_peak,
  external,              // given from outside the analysis
};

enum class CentreStatus { ok, failed };

struct Centre {
  CentreMethod method = CentreMethod::external;
  CentreStatus status = CentreStatus::failed;
  std::string reason;                                    // why it failed (empty when ok)
  WorldCoord position;                                   // RA/Dec deg
  Eigen::Matrix2d covariance = Eigen::Matrix2d::Zero();  // arcsec^2 (east, north)
  std::optional<PixelCoord> pixel_fits;                  // 1-based, on the map it came from
  std::string provenance;                                // "velocity map", "optical image", ...
  std::string label;                                     // name for an external centre
  double weight = 1.0;                                   // in a mixture bootstrap

  bool ok() const { return status == CentreStatus::ok; }
  // The report id: "kinematic-rings", "photometric-peak", ... (the label for
  // an external centre that has one).
  std::string id() const;
};

// "kinematic-rings", "kinematic-harmonic", "photometric-profile", ...
std::string centre_method_name(CentreMethod m);
// The inverse of centre_method_name; nullopt for any other string.
std::optional<CentreMethod> centre_method_from_name(const std::string& name);

// A successful centre with its covariance.
Centre measured_centre(CentreMethod m, WorldCoord position, const Eigen::Matrix2d& covariance,
                       std::string provenance);
// A failed centre with its reason.
Centre failed_centre(CentreMethod m, std::string reason, std::string provenance);

}  // namespace fulcrum
