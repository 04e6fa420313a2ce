// The kinematics stage: tilted-ring and harmonic centres of the velocity map
// (see
// include/fulcrum/pipeline/galaxy_stages.hpp).
#include "fulcrum/core/error.hpp"
#include "fulcrum/kinematics/kinematic_settings.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"

namespace fulcrum::pipeline {

namespace {

const char* kVelocityMap = "velocity map";

// The fit's centre of method `m`, or a failed centre with the reason.
Centre kinematic_centre(CentreMethod m, const kinematics::KinematicFit& fit, const std::optional<Centre>& c,
                        const std::string& why_not) {
  if (fit.status == "ok" && c) return *c;
  return failed_centre(m, why_not.empty() ? (fit.reason.empty() ? "fit " + fit.status : fit.reason) : why_not,
                       kVelocityMap);
}

}  // namespace

kinematics::KinematicOptions kinematic_options_for(const GalaxyInput& in) {
  kinematics::KinematicOptions ko;  // the galaxy's kinematic settings (checked on input)
  kinematics::apply_kinematic_settings(in.kinematic, ko, [](const std::string& k) { return "'" + k + "'"; });
  ko.method = kinematics::Method::both;
  return ko;
}

KinematicsResult fit_kinematic_centres(const GalaxyMaps& maps, const kinematics::KinematicOptions& ko) {
  KinematicsResult r;
  const Image* verr = maps.velocity_error ? &*maps.velocity_error : nullptr;
  try {
    r.fit = kinematics::fit_kinematics(*maps.velocity, verr, ko, maps.intensity ? &*maps.intensity : nullptr);
  } catch (const InputError& e) {
    if (!maps.intensity) throw;
    r.fit = kinematics::fit_kinematics(*maps.velocity, verr, ko);
    r.fit.notes.push_back(std::string("the intensity map could not weight the beam-smearing correction (") +
                          e.what() + "): uniform weight over the velocity footprint used instead");
  }
  const auto& fit = r.fit;
  r.centres.push_back(
      kinematic_centre(CentreMethod::kinematic_rings, fit, fit.ring_centre, fit.status == "ok" ? "" : fit.reason));
  r.centres.push_back(kinematic_centre(CentreMethod::kinematic_harmonic, fit, fit.harmonic_centre,
                                       fit.harmonic_status == "ok" ? "" : fit.harmonic_status));
  if (!r.ok()) return r;
  for (const auto& row : fit.rings) r.rings.push_back({row.node.radius_arcsec, row.node.vrot_kms, row.node.vrot_err_kms});
  r.model = kinematics::model_velocity_map(fit, *maps.velocity);
  r.residual = kinematics::residual_velocity_map(fit, *maps.velocity, *r.model);
  return r;
}

}  // namespace fulcrum::pipeline
