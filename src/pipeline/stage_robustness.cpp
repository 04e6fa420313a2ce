// The robustness stage and what hangs on the split: the disc aperture, the
// chain of robustness::analyse about the adopted centre, and the
// molecular-gas masses of the halves (see
// include/fulcrum/pipeline/galaxy_stages.hpp).
#include <algorithm>
#include <cmath>
#include <numbers>

#include "fulcrum/core/error.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"

namespace fulcrum::pipeline {

std::optional<DiscAperture> disc_aperture(const KinematicsResult* k, std::optional<Beam> beam) {
  if (!k || !k->ok() || !(k->fit.diagnostics.max_radius_arcsec > 0)) return std::nullopt;
  // The gas disc: kinematic PA and inclination, radius of the outer fitted
  // ring plus half a beam (the edge of the detected disc).
  DiscAperture a;
  a.spec.radius_arcsec = k->fit.diagnostics.max_radius_arcsec + (beam ? 0.5 * beam->fwhm_arcsec() : 0.0);
  a.spec.pa_deg = k->fit.pa_deg;
  a.spec.axis_ratio = std::max(0.05, std::cos(k->fit.inc_deg * std::numbers::pi / 180.0));
  return a;
}

robustness::AnalysisSummary measure_robustness(const GalaxyMaps& maps, const GalaxySummary& s,
                                               const robustness::ChainSettings& settings) {
  const Centre* adopted = s.adopted_centre();
  if (!adopted) throw InputError("", "no adopted centre");
  robustness::AnalysisOptions ao;
  ao.galaxy = s.input.name;
  ao.adopted = *adopted;
  for (std::size_t i = 0; i < s.centres.size(); ++i)
    if (i != *s.adopted && s.centres[i].ok()) ao.estimates.push_back(s.centres[i]);
  ao.tail_pa_deg = s.input.tail_pa_deg;
  ao.tail_pa_err_deg = s.input.tail_pa_err_deg;
  ao.tail_image = maps.tail_image ? &*maps.tail_image : nullptr;
  if (s.aperture) ao.aperture = s.aperture->spec;
  ao.rms = s.line_rms();
  ao.error_map = maps.intensity_error ? &*maps.intensity_error : nullptr;
  ao.failures = s.failures;
  ao.settings = settings;
  return robustness::analyse(*maps.intensity, ao);
}

std::optional<MolecularGasResult> molecular_gas(const GalaxyInput& in, const split::SplitSummary& split,
                                                std::optional<double> vsys_kms) {
  if (!in.distance_mpc || !in.molecular.co_line) return std::nullopt;
  MolecularGasResult r;
  auto& mo = r.options;
  mo.line = *in.molecular.co_line;
  if (in.molecular.alpha_co) mo.alpha_co = *in.molecular.alpha_co;
  if (in.molecular.co_ratio_21) mo.co_ratio_21 = *in.molecular.co_ratio_21;
  mo.distance_mpc = *in.distance_mpc;
  if (in.molecular.redshift) {
    mo.redshift = *in.molecular.redshift;
    mo.redshift_source = "given";
  } else if (vsys_kms) {
    mo.redshift = *vsys_kms / 299792.458;
    mo.redshift_source = "systemic velocity / c";
  } else {
    mo.redshift_source = "assumed 0";
  }
  r.masses = report::molecular_gas_masses(split.leading_flux, split.trailing_flux, split.leading_err,
                                          split.trailing_err, split.flux_unit, mo, &r.reason);
  r.ratio_given = in.molecular.co_ratio_21.has_value();
  r.alpha_given = in.molecular.alpha_co.has_value();
  return r;
}

}  // namespace fulcrum::pipeline
