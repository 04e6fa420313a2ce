// The symmetry centre: the point about which the galaxy's light is most
// nearly symmetric under a rotation by 180 degrees, i.e. the minimum of the
// rotational asymmetry (Conselice, Bershady & Jangren 2000, ApJ 529, 886):
//   A(c) = sum_i | I(x_i) - I(2c - x_i) | / sum_i | I(x_i) |
// over the pixels x_i of an aperture of radius R arcsec (a circle on the
// sky). The rotation by 180 degrees about c is the point reflection
// x -> 2c - x, which is the same in pixel space and on the sky for any
// linear WCS, so no resampling geometry is needed: I(2c - x_i) is read by
// bilinear interpolation. A pixel enters only when it and its reflection are
// both usable (masked sources drop out symmetrically).
//
// Conselice et al. search a grid of centres and refine; here the pixel set
// is fixed (the aperture about the starting point) so that A(c) is
// continuous in c, A is minimised by Nelder & Mead (1965) simplex steps from
// the starting point, then the aperture is re-centred on the minimum and the
// search repeated once (SymmetryOptions::aperture_centre: one round about a
// given point). A is published with a sky term subtracted; that term
// does not depend on c and is not needed to find the centre, so the value
// reported here is the raw A at the minimum.
//
// No covariance of its own: the uncertainty is the noise bootstrap.
#pragma once

#include <memory>
#include <optional>
#include <vector>

#include "fulcrum/photometry/centre_estimate.hpp"
#include "fulcrum/photometry/prepared_image.hpp"

namespace fulcrum::photometry {

struct SymmetryOptions {
  double aperture_radius_arcsec = 0.0;  // <= 0: 1.5 segment radii
  double tolerance_pixels = 1e-5;
  int max_evaluations = 2000;
  std::optional<PixelCoord> start;      // default: the segment's first moment
  // When set: one search round over the fixed aperture about this point
  // (the bootstrap's draws use the point estimate), instead of a round about
  // the start and a second about the first round's minimum.
  std::optional<PixelCoord> aperture_centre;
};

// A(c) over the fixed aperture about `aperture_centre` (for tests).
double rotational_asymmetry(const PreparedImage& p, const std::vector<double>& data, PixelCoord c,
                            PixelCoord aperture_centre, double radius_arcsec);

PixelEstimate estimate_symmetry_centre(const PreparedImage& p, const std::vector<double>& data,
                                       const SymmetryOptions& options = {});

// The symmetry centre of many images whose usable (finite) pixels are those
// of p.data, such as the noise bootstrap's draws (noise is added to finite
// pixels only): estimate(data) gives what estimate_symmetry_centre(p, data,
// options) gives, bit for bit, with the aperture's pixels and the
// finiteness flags found once here. options.aperture_centre must be set
// (one search round); `p` must outlive this object.
class SymmetryDraws {
 public:
  SymmetryDraws(const PreparedImage& p, const SymmetryOptions& options);
  PixelEstimate estimate(const std::vector<double>& data) const;

 private:
  struct Shared;
  const PreparedImage& p_;
  SymmetryOptions o_;
  std::shared_ptr<const Shared> shared_;
};

}  // namespace fulcrum::photometry
