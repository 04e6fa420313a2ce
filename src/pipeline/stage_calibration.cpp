// The calibration stage: matched mocks of one galaxy from its typed summary
// and the already-loaded maps (see include/fulcrum/pipeline/galaxy_stages.hpp).
#include <cmath>

#include "fulcrum/core/error.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"

namespace fulcrum::pipeline {

calibration::MatchedInputs matched_inputs(const GalaxySummary& s, const GalaxyMaps& maps) {
  const std::string& who = s.input.name;
  if (!maps.intensity) throw InputError(who, "calibration needs the intensity map");
  const Centre* rings = nullptr;
  for (const auto& c : s.centres)
    if (c.method == CentreMethod::kinematic_rings && c.ok()) rings = &c;
  if (!rings || !s.kinematics || !s.kinematics->ok())
    throw InputError(who, "has no successful kinematic tilted-ring centre: nothing to match the mocks to");
  if (s.kinematics->rings.empty()) throw InputError(who, "has no ring table (kinematics.rings)");
  if (!s.robustness) throw InputError(who, "has no split (calibration needs the measured asymmetry)");
  calibration::MatchedInputs in;
  in.galaxy = who;
  in.intensity = &*maps.intensity;
  in.intensity_error = maps.intensity_error ? &*maps.intensity_error : nullptr;
  in.rms = s.line_rms();
  in.velocity = maps.velocity ? &*maps.velocity : nullptr;
  in.velocity_error = maps.velocity_error ? &*maps.velocity_error : nullptr;
  in.centre = *rings;
  const auto& fit = s.kinematics->fit;
  in.pa_deg = fit.pa_deg;
  in.inc_deg = fit.inc_deg;
  in.vsys_kms = fit.vsys_kms;
  for (const auto& r : s.kinematics->rings) {
    if (!std::isfinite(r.radius_arcsec) || !std::isfinite(r.vrot_kms)) continue;
    in.ring_radius_arcsec.push_back(r.radius_arcsec);
    in.ring_vrot_kms.push_back(r.vrot_kms);
  }
  if (in.ring_radius_arcsec.empty()) throw InputError(who, "has no ring table (kinematics.rings)");
  in.tail_pa_deg = s.robustness->tail_pa_deg;
  in.tail_pa_err_deg = s.robustness->tail_pa_err_deg;
  in.measured_asymmetry = s.robustness->split.asymmetry;
  if (!std::isfinite(in.measured_asymmetry)) throw InputError(who, "has no asymmetry (calibration needs it)");
  if (s.aperture) in.aperture = s.aperture->spec;
  for (const auto& c : s.centres)
    if (&c != rings && c.ok()) in.estimates.push_back(c);
  return in;
}

CalibrationResult calibrate_verdict(const GalaxySummary& s, const GalaxyMaps& maps, const AnalysisOptions& opt) {
  CalibrationResult r;
  try {
    calibration::CalibrationOptions co;
    co.n_mocks = static_cast<std::size_t>(opt.calibrate);
    co.seed = opt.seed;
    co.chain = chain_settings(opt);
    r.summary = calibration::calibrate(matched_inputs(s, maps), co);
  } catch (const InputError& e) {
    r.failure = e.what();
  }
  return r;
}

}  // namespace fulcrum::pipeline
