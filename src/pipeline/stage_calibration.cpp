// The calibration stage: matched mocks of one galaxy from its typed summary
// and the already-loaded maps (see include/fulcrum/pipeline/galaxy_stages.hpp).
#include <algorithm>
#include <cmath>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/random.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"

namespace fulcrum::pipeline {

namespace {

constexpr std::uint64_t kCentreBootstrapStream = 0x63656e7472656669ull;  // "centrefi"

// What the mocks take from the kinematic fit besides its centre and rings:
// the disc's orientation and vsys, the extra velocity scatter, the residual
// scale's expectation (shared by every re-fit), and the velocity noise for a
// map without an error map: the fit's residual rms, which is then the data's
// only measure of its noise (as in the fit's own errors), instead of a fixed
// guess.
void put_fitted_geometry(const kinematics::KinematicFit& fit, calibration::MatchedInputs& in) {
  in.pa_deg = fit.pa_deg;
  in.inc_deg = fit.inc_deg;
  in.vsys_kms = fit.vsys_kms;
  if (fit.diagnostics.residual_rms_kms > 0.0) in.velocity_noise_kms = fit.diagnostics.residual_rms_kms;
  in.velocity_scatter_kms = fit.scatter.scatter_kms;
  in.expected_residual_fraction = fit.centre_errors.expected_residual_fraction;
}

// The fitted disc of `fit` as the mocks' truth: the tilted-ring centre
// (with its covariance), PA, inclination, vsys, the velocity scatter beyond
// the error map and the rotation curve (its finite nodes); false when the
// fit has no tilted-ring centre or no ring.
bool put_fitted_disc(const kinematics::KinematicFit& fit, calibration::MatchedInputs& in) {
  if (fit.status != "ok" || !fit.ring_centre || !fit.ring_centre->ok()) return false;
  in.centre = *fit.ring_centre;
  put_fitted_geometry(fit, in);
  for (const auto& r : fit.rings) {
    if (!std::isfinite(r.node.radius_arcsec) || !std::isfinite(r.node.vrot_kms)) continue;
    in.ring_radius_arcsec.push_back(r.node.radius_arcsec);
    in.ring_vrot_kms.push_back(r.node.vrot_kms);
  }
  return !in.ring_radius_arcsec.empty();
}

}  // namespace

calibration::MatchedInputs matched_inputs(const GalaxySummary& s, const GalaxyMaps& maps) {
  const std::string& who = s.input.name;
  if (!maps.intensity) throw InputError(who, "calibration needs the intensity map");
  // From the summary's fields, which report_reader restores too (calibrate
  // --from): the tilted-ring centre among the centres, the ring table.
  const Centre* rings = nullptr;
  for (const auto& c : s.centres)
    if (c.method == CentreMethod::kinematic_rings && c.ok()) rings = &c;
  if (!rings || !s.kinematics || !s.kinematics->ok())
    throw InputError(who, "has no successful kinematic tilted-ring centre: nothing to match the mocks to");
  if (!s.robustness) throw InputError(who, "has no split (calibration needs the measured asymmetry)");
  calibration::MatchedInputs in;
  in.centre = *rings;
  put_fitted_geometry(s.kinematics->fit, in);
  for (const auto& r : s.kinematics->rings) {
    if (!std::isfinite(r.radius_arcsec) || !std::isfinite(r.vrot_kms)) continue;
    in.ring_radius_arcsec.push_back(r.radius_arcsec);
    in.ring_vrot_kms.push_back(r.vrot_kms);
  }
  if (in.ring_radius_arcsec.empty()) throw InputError(who, "has no ring table (kinematics.rings)");
  in.galaxy = who;
  in.intensity = &*maps.intensity;
  in.intensity_error = maps.intensity_error ? &*maps.intensity_error : nullptr;
  in.rms = s.line_rms();
  in.clip_snr = s.input.clip_snr.value_or(0.0);  // the mocks are clipped as the data were
  // Clipped pixels blanked (NaN) rather than set to 0, when the map has blanks.
  in.clip_blank = in.clip_snr > 0.0 &&
                  std::any_of(maps.intensity->data.begin(), maps.intensity->data.end(),
                              [](double v) { return std::isnan(v); });
  in.velocity = maps.velocity ? &*maps.velocity : nullptr;
  in.velocity_error = maps.velocity_error ? &*maps.velocity_error : nullptr;
  in.tail_pa_deg = s.robustness->tail_pa_deg;
  in.tail_pa_err_deg = s.robustness->tail_pa_err_deg;
  in.measured_asymmetry = s.robustness->split.asymmetry;
  if (!std::isfinite(in.measured_asymmetry)) throw InputError(who, "has no asymmetry (calibration needs it)");
  if (s.aperture) in.aperture = s.aperture->spec;
  for (const auto& c : s.centres)
    if (c.ok() && c.method != CentreMethod::kinematic_rings) in.estimates.push_back(c);
  return in;
}

void take_summary_settings(const GalaxySummary& s, calibration::CalibrationOptions& co) {
  co.chain.bootstrap_estimates = s.bootstrap_from_estimates;
  if (s.centre_bootstrap && s.centre_bootstrap->applied) co.centre_covariance_scale2 = s.centre_bootstrap->scale2;
}

CalibrationResult calibrate_verdict(const GalaxySummary& s, const GalaxyMaps& maps, const AnalysisOptions& opt) {
  CalibrationResult r;
  try {
    calibration::CalibrationOptions co;
    co.n_mocks = static_cast<std::size_t>(opt.calibrate);
    co.seed = opt.seed;
    co.chain = chain_settings(opt);
    take_summary_settings(s, co);
    // The centre bootstrap's re-fits serve the mocks too (their centres).
    if (s.centre_bootstrap && s.centre_bootstrap->applied) co.shared_refits = s.centre_bootstrap->outcomes;
    r.summary = calibration::calibrate(matched_inputs(s, maps), co);
  } catch (const InputError& e) {
    r.failure = e.what();
  }
  return r;
}



calibration::CentreBootstrap widen_centre_covariance(kinematics::KinematicFit& fit, const Image& velocity,
                                                     const Image* velocity_error, const Image& intensity,
                                                     std::uint64_t seed, std::size_t n_refits) {
  calibration::CentreBootstrap b;
  calibration::MatchedInputs in;
  if (!put_fitted_disc(fit, in)) {
    b.reason = "no tilted-ring centre with a ring table";
    return b;
  }
  in.galaxy = velocity.path;
  in.intensity = &intensity;
  in.velocity = &velocity;
  in.velocity_error = velocity_error;
  calibration::CentreBootstrapOptions o;
  o.seed = splitmix64(seed ^ kCentreBootstrapStream);
  o.n_refits = n_refits;
  b = calibration::bootstrap_centre_covariance(in, o);
  if (!b.applied) return b;
  for (auto* c : {&fit.ring_centre, &fit.centre})
    if (*c && c->value().method == CentreMethod::kinematic_rings) c->value().covariance *= b.scale2;
  fit.pa_err_deg *= std::sqrt(b.pa_scale2);
  fit.inc_err_deg *= std::sqrt(b.inc_scale2);
  return b;
}

}  // namespace fulcrum::pipeline
