// The kinematic centre re-fit of the calibration mocks, with everything that
// does not change between mocks made once per galaxy.
//
// Every mock velocity map lives on the real velocity map's grid and keeps its
// blanks, so the velocity samples' sky offsets (east, north arcsec about the
// true centre), pixel indices and 1-sigma errors are the same for all mocks;
// only the velocities change. MockRefit makes the samples once
// (kinematics::samples_from_image on the real maps, so unit conversion and
// the pixels with unusable errors are treated as in the real analysis) and,
// per mock set, the beam-smearing grid weighted by the set's noise-free line
// model on the velocity grid (the mock velocities were smeared with it; the
// real analysis weights with its line map in the same way).
//
// Per mock: the samples get the mock's velocities, the footprint cleaning of
// the real analysis runs on them (footprint.hpp; when it removes a pixel the
// smearing grid is rebuilt for the samples that are left), and the fit
// (kinematics::fit_kinematics_samples, tilted rings, no ring-by-ring fit)
// starts from the truth: centre guess = the true centre, PA, inclination
// and vsys guesses = the true ones, no multi-start scouts. Starting at the
// truth is justified in mocks: the noise moves the minimum by a fraction of
// a beam, and the multi-start only guards against distant local minima that
// a first guess from the data can fall into; a mock therefore does not test
// that guard (its failures are not counted), only the fit's scatter and its
// covariance about the right minimum. The covariance is the real analysis'
// (residual based, centre_error_terms.hpp, with the options' defaults).
//
// Units: arcsec (east, north) about the true centre, km/s, degrees.
#pragma once

#include <optional>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"

namespace fulcrum::calibration {

struct MockRefitSetup {
  WorldCoord truth;                  // the mocks' true centre (the samples' reference)
  double pa_deg = 0.0, inc_deg = 45.0, vsys_kms = 0.0;
  bool correct_beam_smearing = true;
  std::optional<Beam> beam;          // the velocity map's beam, else the line map's (none: no correction)
  double expected_residual_fraction = 0.0;  // the data fit's, shared by every re-fit (0: each computes it)
};

class MockRefit {
 public:
  // `velocity`, `velocity_error` (may be null): the real maps (grid, blanks,
  // errors); `set_models`: per mock set the noise-free line model on the
  // velocity grid (weights of the smearing correction), or empty for
  // uniform weight. Throws InputError as samples_from_image does.
  MockRefit(const Image& velocity, const Image* velocity_error, std::vector<Image> set_models,
            const MockRefitSetup& setup);

  // The options every mock fit uses (see above).
  const kinematics::KinematicOptions& options() const { return options_; }
  // The 1-sigma velocity error (km/s) of each pixel of the velocity grid
  // (x fastest), NaN where the real map has no usable sample or no error map
  // was given.
  const std::vector<double>& pixel_sigma() const { return pixel_sigma_; }

  // Re-fit mock `mock_velocity` (km/s, on the velocity grid) of set `set`.
  kinematics::KinematicFit fit(const std::vector<double>& mock_velocity, int set) const;
  // Share E0[sum z^2] / N (centre_covariance.hpp) among the re-fits: it
  // depends on the footprint, the errors and the disc, not on the noise.
  void share_expected_residual_fraction(double f) { options_.expected_residual_fraction = f; }

 private:
  const Image& velocity_;
  std::vector<Image> models_;
  kinematics::VelocitySamples samples_;        // positions and errors shared by all mocks
  std::vector<std::optional<kinematics::SmearingGrid>> grids_;  // per set, for the full sample list
  std::vector<double> pixel_sigma_;
  kinematics::KinematicOptions options_;
  WorldCoord truth_;
  std::optional<Beam> beam_;
};

}  // namespace fulcrum::calibration
