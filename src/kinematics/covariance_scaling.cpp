// Correlated-pixel and reduced-chi^2 scaling of fit covariances
// (covariance_scaling.hpp; derivation in docs/kinematics.md §3).
#include "fulcrum/kinematics/covariance_scaling.hpp"

#include <algorithm>

namespace fulcrum::kinematics {

double pixels_per_beam(const std::optional<Beam>& beam, double pixel_area_arcsec2) {
  if (!beam || beam->bmaj_arcsec <= 0 || beam->bmin_arcsec <= 0 || pixel_area_arcsec2 <= 0)
    return 1.0;
  return beam->pixels_per_beam(pixel_area_arcsec2);
}

double correlation_factor(const std::optional<Beam>& beam, double pixel_area_arcsec2,
                          double option_value) {
  if (option_value > 0) return option_value;
  if (!beam || beam->bmaj_arcsec <= 0 || beam->bmin_arcsec <= 0) return 1.0;
  // Integral of the autocorrelation of a unit-peak Gaussian beam, normalised
  // to 1 at zero lag, is 2 * Omega_beam.
  return std::max(1.0, 2.0 * pixels_per_beam(beam, pixel_area_arcsec2));
}

}  // namespace fulcrum::kinematics
