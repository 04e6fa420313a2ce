// Matched-mock calibration inputs from a finished whole-galaxy analysis: the
// report.json written by pipeline/galaxy_analysis.hpp plus the galaxy's maps.
//
// Read from the report: the kinematic tilted-ring centre and its covariance
// (centres[id = "kinematic-rings"], RA/Dec deg, arcsec^2), PA, inclination,
// vsys and the ring table (kinematics.rings: radius_arcsec, vrot_kms), the
// tail PA and its error, A at the adopted centre and the aperture (split.*),
// and every other successful centre estimate, placed in the mocks at its
// (east, north) arcsec offset from the kinematic centre.
#pragma once

#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "fulcrum/calibration/calibration.hpp"
#include "fulcrum/pipeline/manifest.hpp"

namespace fulcrum::calibration {

struct GalaxyMaps {
  Image intensity;
  std::optional<Image> intensity_error, velocity, velocity_error;
};

// Reads the maps named in `input`.
GalaxyMaps load_maps(const pipeline::GalaxyInput& input);

// Throws InputError (naming `where`) when the report has no kinematic fit,
// no split, or no asymmetry: calibration needs them. `maps` must outlive the
// returned inputs (they point into it).
MatchedInputs matched_inputs_from_report(const nlohmann::json& report, const pipeline::GalaxyInput& input,
                                         const GalaxyMaps& maps, const std::string& where);

}  // namespace fulcrum::calibration
