// Uncertainty of a centre estimator that has no covariance of its own: a
// bootstrap over noise realisations.
//
// Each draw adds independent Gaussian noise of the measured sky rms to every
// usable pixel of the sky-subtracted image and runs the estimator again; the
// covariance of the draws about their mean is the estimator's noise
// covariance (pixel^2), carried to the sky by C_sky = J C_pix J^T. Adding
// noise to data that already hold one realisation measures the scatter that
// one more realisation causes, which for an estimator that is locally
// linear in the data equals the scatter about the truth (the usual
// "perturbation" bootstrap for images, common practice). The noise model is
// white and sky-limited: the Poisson noise of the galaxy itself is not
// added, which underestimates the error for a galaxy much brighter than the
// sky; documented in docs/photometry.md.
//
// Reproducible: draw k of estimator `tag` uses its own generator seeded from
// (seed, tag, k), so results do not depend on the number of threads or on
// which other estimators ran.
//
// Cost: an estimator that reads only part of the image needs noise only
// there. With a `window` (a pixel box, inclusive) the noise is added to the
// usable pixels inside it only; pixels outside keep their values. The caller
// chooses a window that holds every pixel the estimator can read for a draw
// near the point estimate (its aperture, ellipse or smoothing footprint plus
// a margin), so the draws are the same in distribution as draws over the
// whole image; the deviates differ, since they are drawn for fewer pixels.
// Each thread keeps one working copy of the image and restores the window
// from `p.data` before every draw.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/photometry/centre_estimate.hpp"
#include "fulcrum/photometry/prepared_image.hpp"

namespace fulcrum::photometry {

struct BootstrapOptions {
  int draws = 100;
  std::uint64_t seed = 1;
  double min_success_fraction = 0.8;  // of the draws, or the result is refused
};

struct BootstrapSummary {
  bool ok = false;
  std::string reason;
  Eigen::Matrix2d cov_pixels = Eigen::Matrix2d::Zero();
  int draws = 0;
  int succeeded = 0;
};

using Estimator = std::function<PixelEstimate(const std::vector<double>& data)>;

// The box [c - half, c + half] (pixels, per axis) clipped to the image.
PixelBox box_around(const PreparedImage& p, PixelCoord c, double half_x, double half_y);

// `b` grown by `margin` pixels on every side, clipped to the image.
PixelBox grown(const PreparedImage& p, const PixelBox& b, int margin);

BootstrapSummary bootstrap_centre(const PreparedImage& p, const Estimator& estimator,
                                  double noise_rms, const std::string& tag,
                                  const BootstrapOptions& options,
                                  const std::optional<PixelBox>& window = std::nullopt);

// A 64-bit seed mixed from (seed, tag, k) by the splitmix64 finaliser
// (Steele, Lea & Flood 2014).
std::uint64_t mix_seed(std::uint64_t seed, const std::string& tag, std::uint64_t k);

}  // namespace fulcrum::photometry
