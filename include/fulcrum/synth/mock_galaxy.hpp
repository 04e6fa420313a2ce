// Mock galaxies with known truth: the demo data source and the engine of
// every injection-recovery test.
//
// A mock is a thin inclined disc with an arctangent rotation curve,
//   vrot(R) = vflat * (2/pi) * atan(R / r_turn),
// observed velocity v = vsys + vrot(R) sin(i) cos(theta) (the tilted-ring
// model of Begeman 1989 with one ring geometry), an exponential gas disc
//   Sigma(R, phi) ∝ exp(-R / h) * (1 + leading_excess * cos(phi - phi_lead))
// truncated at `disc_radius` (phi: position angle on the sky about the
// centre, phi_lead = tail PA + 180 deg), plus a one-sided tail of gas along
// the tail PA; everything is convolved with the beam and sampled on a grid
// whose WCS may be rotated and flipped. An optical image on another grid
// holds an elliptical Sersic profile (its centre offset from the kinematic
// centre by `optical_offset`), sky, noise, PSF and stars.
//
// Units: angles in degrees (PA north through east), sizes in arcsec, velocities
// in km/s, line flux in Jy km/s; line maps are in Jy/beam km/s, velocity maps
// in km/s, optical images in arbitrary counts ("adu").
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "fulcrum/io/image.hpp"
#include "fulcrum/synth/delivered_style.hpp"

namespace fulcrum::synth {

struct GridSpec {
  int nx = 128;
  int ny = 128;
  double pixel_arcsec = 0.5;
  double rotation_deg = 0.0;  // PA (north through east) of the +y pixel axis
  bool flip = false;          // true: east to the right when north is up
  std::string projection = "SIN";
  // Sky offset of the grid's reference point (CRVAL, at the central pixel)
  // from the galaxy's kinematic centre, arcsec; keeps the centre off any
  // special pixel position.
  double centre_east_arcsec = 0.0;
  double centre_north_arcsec = 0.0;
};

struct OpticalSpec {
  bool enabled = true;
  GridSpec grid{160, 160, 0.4, 0.0, false, "TAN"};
  double offset_east_arcsec = 0.0;   // photometric centre minus kinematic centre
  double offset_north_arcsec = 0.0;
  double sersic_n = 1.0;
  double re_arcsec = 6.0;
  double q = 0.6;                    // axis ratio; default follows the disc when < 0
  double pa_deg = -1.0;              // major-axis PA; < 0: the kinematic PA
  double total_counts = 5.0e5;
  double sky_level = 100.0;
  double noise_rms = 2.0;
  double psf_fwhm_arcsec = 1.2;
  int n_stars = 3;
  double star_counts = 2.0e4;         // mean counts per star (each drawn in 0.5-2x this)
};

struct CubeSpec {
  bool enabled = false;
  int n_channels = 64;
  double channel_width_kms = 10.0;
  double dispersion_kms = 12.0;      // intrinsic line width (Gaussian sigma)
  double noise_rms = 0.0005;         // Jy/beam per channel (~ the line-map noise for a few channels)
  std::string spectral_type = "VRAD"; // VRAD, VOPT or FREQ
  double rest_frequency_hz = 230.538e9;
  bool reverse_channels = false;
};

struct MockGalaxy {
  std::string name = "mock";
  std::uint64_t seed = 1;

  // Position and kinematics
  double ra_deg = 150.0;
  double dec_deg = 20.0;
  double pa_deg = 60.0;        // receding half of the major axis
  double inc_deg = 55.0;
  double vsys_kms = 7000.0;
  double vflat_kms = 180.0;
  double r_turn_arcsec = 3.0;

  // Gas
  double total_flux_jykms = 20.0;       // disc + tail, before noise
  double scale_length_arcsec = 6.0;
  double disc_radius_arcsec = 20.0;
  double leading_excess = 0.0;          // amplitude of the lopsided term
  double tail_pa_deg = 300.0;           // from the centre towards the tail
  double tail_pa_err_deg = 10.0;
  double tail_flux_fraction = 0.1;
  double tail_length_arcsec = 25.0;
  double tail_width_arcsec = 3.0;       // Gaussian sigma across the tail
  double stripped_fraction = 0.0;       // 0..1: fraction of disc gas removed (outer disc first)

  // Observation
  GridSpec grid;
  double bmaj_arcsec = 2.0;
  double bmin_arcsec = 1.6;
  double bpa_deg = 20.0;
  double intensity_rms = 0.01;          // Jy/beam km/s, beam-correlated
  double velocity_noise_kms = 4.0;      // at the detection threshold; scales as 1/SNR
  double velocity_noise_floor_kms = 1.0; // the error never drops below this
  double mask_snr = 3.0;                // velocity pixels kept where intensity SNR >= this
  double hole_fraction = 0.0;           // fraction of kept velocity pixels blanked in blobs
  double hole_radius_arcsec = 0.0;      // radius of each blob; <= 0: the beam FWHM
  double distance_mpc = 100.0;

  OpticalSpec optical;
  CubeSpec cube;
  DeliveredSpec delivered;  // make the line maps look delivered (delivered_style.hpp)

  // Free text: what this mock is meant to show, and the verdict expected
  // for it by the whole analysis (empty when none).
  std::string description;
  std::string expected_verdict;
};

struct MockProducts {
  Image velocity;          // km/s, NaN outside the mask
  Image velocity_error;    // km/s
  Image velocity_model;    // km/s, noise-free, everywhere
  Image velocity_model_beam;  // km/s, intensity-weighted and beam-smeared: conv(I v)/conv(I); NaN without gas
  Image intensity;         // Jy/beam km/s, with noise
  Image intensity_error;   // Jy/beam km/s, per pixel rms
  Image intensity_model;   // Jy/beam km/s, noise-free
  std::optional<Image> optical;
  std::optional<Image> optical_model;
  std::optional<DeliveredMaps> delivered;  // when galaxy.delivered.enabled: written instead
  std::optional<Cube> cube;  // header holds celestial + spectral cards, as if read from a file
  std::string cube_spectral_cards;  // spectral-axis header cards for write_cube
  nlohmann::json truth;    // every parameter plus derived truths
};

// The WCS of a mock grid: CRVAL at `centre` shifted by the grid's
// centre_east/north offset, CRPIX at the central pixel (plus `margin` pixels
// for padded work grids), CD from the pixel scale, rotation and flip.
CelestialWcs mock_grid_wcs(const GridSpec& grid, WorldCoord centre, int margin = 0);

// Throws InputError naming the parameter when a value is out of range.
void validate_mock(const MockGalaxy& galaxy);

// Build every product of a mock. Deterministic in (galaxy, galaxy.seed).
MockProducts make_mock(const MockGalaxy& galaxy);

// Read mock parameters from a TOML file (one [galaxy] table with the field
// names above, optional [galaxy.grid], [galaxy.optical], [galaxy.cube],
// [galaxy.delivered]).
MockGalaxy mock_from_toml(const std::string& path);
// The parameters as JSON (the "parameters" block of the truth file).
nlohmann::json mock_to_json(const MockGalaxy& galaxy);

// Write the products of a mock into `dir` as vel.fits, vel_err.fits,
// mom0.fits, mom0_err.fits, opt.fits (when enabled), cube.fits (when
// enabled) and truth.json, plus the noise-free vel_model.fits and
// mom0_model.fits. Returns the file names written.
std::vector<std::string> write_mock(const std::string& dir, const MockProducts& products);

// The built-in demo sample: five to seven invented galaxies in an invented
// cluster, each with the verdict it is built to produce.
std::vector<MockGalaxy> demo_sample();

// Make and write every galaxy into dir/<name>/ and a sample manifest
// dir/sample.toml in the format `fulcrum run` reads ([sample] name, seed;
// one [[galaxy]] per mock with paths relative to `dir`). Returns the
// manifest's path.
std::string write_sample(const std::string& dir, const std::vector<MockGalaxy>& galaxies,
                         const std::string& sample_name, std::uint64_t seed);

}  // namespace fulcrum::synth
