// The beam-correlated noise model (noise_correlation.hpp; derivation in
// docs/uncertainties.md §1).
#include "fulcrum/imaging/noise_correlation.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "fulcrum/core/error.hpp"

namespace fulcrum {

NoiseModel parse_noise_model(const std::string& name) {
  if (name == "smoothed") return NoiseModel::smoothed;
  if (name == "interferometric") return NoiseModel::interferometric;
  throw InputError("", "the noise model must be smoothed or interferometric (got '" + name + "')");
}

std::string noise_model_name(NoiseModel m) {
  return m == NoiseModel::smoothed ? "smoothed" : "interferometric";
}

double NoiseCorrelation::at(double d_east, double d_north) const {
  if (!(sigma_major_arcsec > 0) || !(sigma_minor_arcsec > 0))
    return d_east == 0.0 && d_north == 0.0 ? 1.0 : 0.0;
  const double pa = pa_deg * std::numbers::pi / 180.0;
  // Components along the major axis (sin PA, cos PA) and the minor axis.
  const double a = d_east * std::sin(pa) + d_north * std::cos(pa);
  const double b = d_east * std::cos(pa) - d_north * std::sin(pa);
  const double q = a * a / (sigma_major_arcsec * sigma_major_arcsec) +
                   b * b / (sigma_minor_arcsec * sigma_minor_arcsec);
  return std::exp(-0.5 * q);
}

double NoiseCorrelation::area_arcsec2() const {
  return 2.0 * std::numbers::pi * sigma_major_arcsec * sigma_minor_arcsec;
}

double NoiseCorrelation::correlated_pixels(double pixel_area_arcsec2) const {
  if (!(pixel_area_arcsec2 > 0)) return 1.0;
  return std::max(1.0, area_arcsec2() / pixel_area_arcsec2);
}

NoiseCorrelation noise_correlation_of_beam(const Beam& beam, NoiseModel model) {
  // smoothed: the autocorrelation of a Gaussian of sigma s is a Gaussian of
  // sigma sqrt(2) s; interferometric: the beam itself.
  const double k = model == NoiseModel::smoothed ? std::sqrt(2.0) : 1.0;
  NoiseCorrelation c;
  c.sigma_major_arcsec = k * beam.bmaj_arcsec / kFwhmPerSigma;
  c.sigma_minor_arcsec = k * beam.bmin_arcsec / kFwhmPerSigma;
  c.pa_deg = beam.bpa_deg;
  return c;
}

double correlated_pixel_factor(const std::optional<Beam>& beam, double pixel_area_arcsec2,
                               NoiseModel model) {
  if (!beam || !(beam->bmaj_arcsec > 0) || !(beam->bmin_arcsec > 0)) return 1.0;
  return noise_correlation_of_beam(*beam, model).correlated_pixels(pixel_area_arcsec2);
}

}  // namespace fulcrum
