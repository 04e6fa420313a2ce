// Correlated-pixel and reduced-chi^2 scaling of fit covariances
// (covariance_scaling.hpp; derivation in docs/kinematics.md §3).
#include "fulcrum/kinematics/covariance_scaling.hpp"

#include <algorithm>

#include "fulcrum/imaging/noise_correlation.hpp"

namespace fulcrum::kinematics {

double pixels_per_beam(const std::optional<Beam>& beam, double pixel_area_arcsec2) {
  if (!beam || beam->bmaj_arcsec <= 0 || beam->bmin_arcsec <= 0 || pixel_area_arcsec2 <= 0)
    return 1.0;
  return beam->pixels_per_beam(pixel_area_arcsec2);
}

double correlation_factor(const std::optional<Beam>& beam, double pixel_area_arcsec2,
                          double option_value) {
  if (option_value > 0) return option_value;
  // The one noise model (imaging/noise_correlation.hpp): noise white before
  // the beam, eta = 2 * pixels per beam.
  return correlated_pixel_factor(beam, pixel_area_arcsec2, NoiseModel::smoothed);
}

}  // namespace fulcrum::kinematics
