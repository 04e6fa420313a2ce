// The usable pixels of a velocity map, seen on the sky.
//
// Every fit in kinematics/ works on a VelocitySamples list: for each finite
// velocity pixel, its (east, north) offset in arcsec from the reference
// position (through sky/pixel_offsets.hpp, so a rotated or flipped grid is
// handled), the velocity in km/s and its 1-sigma error in km/s (1 when no
// error map is given: the fit then estimates the scatter from the residuals).
// Pixel indices are 0-based. `pixel_area_arcsec2` and `beam` describe the
// sampling, from which the correlated-pixel scaling of the covariance follows
// (covariance_scaling.hpp).
//
// Velocity maps in m/s (BUNIT 'm/s', or no velocity unit and values beyond
// 1e5 in size) are converted to km/s on reading, with a note.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/beam.hpp"
#include "fulcrum/io/image.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::kinematics {

struct VelocitySamples {
  std::vector<double> east, north;  // arcsec from the reference
  std::vector<double> velocity;     // km/s
  std::vector<double> sigma;        // km/s (1 when unknown)
  std::vector<int> x, y;            // 0-based pixel of each sample
  bool has_errors = false;
  // Finite velocity pixels left out because their error is missing (NaN,
  // infinite, >= 1e30) or not positive: an error map marks failed fits so.
  int dropped_bad_error = 0;
  double pixel_area_arcsec2 = 1.0;
  std::optional<Beam> beam;
  std::size_t size() const { return velocity.size(); }
};

// The factor that takes the map's velocity unit to km/s (1 or 1e-3), and a
// note saying why when it is not 1. Throws InputError for units that are not
// velocities (e.g. Jy/beam).
double velocity_unit_factor(const Image& velocity, std::string* why);

// Samples of `velocity` (and `error`, same grid) about `reference`. Pixels
// where either value is not finite, or the error is not positive, are left
// out (the latter counted in dropped_bad_error). Throws InputError when the error map's grid differs from the velocity
// map's.
VelocitySamples samples_from_image(const Image& velocity, const Image* error,
                                   WorldCoord reference);

}  // namespace fulcrum::kinematics
