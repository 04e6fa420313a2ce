// Beam smearing of a velocity (moment-1) map, and the correction that the
// kinematic fit applies for it by forward modelling.
//
// The smearing operator. A cube observed with a beam B is the sky cube
// convolved with B channel by channel. Its zeroth and first velocity moments
// are linear in the cube, so they are the beam-convolved moments of the sky:
// with I(p) the line intensity and v(p) the intensity-weighted mean velocity
// at sky position p,
//
//     M0 = B * I,     M1 = B * (I v),     v_obs = M1 / M0 = B * (I v) / B * I.
//
// This is exact for moments taken over the whole line without clipping; a
// clipped or masked moment map is close to it where the line is well
// detected. Near the centre of a rotating disc the beam mixes the approaching
// and receding sides, which flattens the observed velocity gradient; a
// tilted-ring model fitted to v_obs without allowing for this comes out too
// face-on (the inclination is biased low) with an inner rotation curve that
// rises too slowly.
//
// The correction (docs/kinematics.md §2a). After the tilted-ring fit to the
// observed map, the fitted (intrinsic) model velocity m(p) is evaluated on
// every pixel of the map within reach of the detected footprint, smeared as
// above with the line intensity, and the difference
//
//     Delta(p) = B * (I m) / B * I  -  m(p)
//
// is what the beam does to the model. The fit is then repeated on
// v_obs - Delta, whose fixed point is a model that, smeared, matches the data.
// Correcting a fitted rotation curve or velocity field for beam smearing by
// smoothing model velocity fields to the observed resolution is common
// practice in rotation-curve work (recalled from memory; no single paper is
// cited for it here).
//
// Intensity I: the line-intensity (moment-0) map when one is given, on any
// grid (looked up at each velocity-map pixel through the two WCSs, nearest
// pixel), with NaN and negative values taken as no emission; without one,
// uniform weight over the detected footprint (the finite velocity pixels),
// which is exact for a disc of uniform surface brightness and otherwise
// under-corrects where the brightness falls steeply.
//
// Units: arcsec offsets (east, north) from the samples' reference, km/s.
// Pixels 0-based; arrays nx * ny with x fastest. The beam kernel is the
// map's beam as a sky Gaussian (imaging/gaussian_smooth.hpp), so rotated and
// flipped grids are smeared correctly.
#pragma once

#include <Eigen/Core>
#include <cstddef>
#include <string>
#include <vector>

#include "fulcrum/io/beam.hpp"
#include "fulcrum/io/image.hpp"
#include "fulcrum/kinematics/global_fit.hpp"
#include "fulcrum/kinematics/velocity_samples.hpp"

namespace fulcrum::kinematics {

// The moment-1 smearing operator on an nx x ny grid: B * (I v) / B * I with
// the Gaussian of pixel covariance `pixel_cov` (pixel^2), truncated at
// `truncate_sigma` as in gaussian_kernel(). Pixels with a non-finite velocity
// or intensity, or an intensity <= 0, carry no emission; beyond the grid there
// is none either. The result is computed where `where` is non-zero (every
// pixel when `where` is empty) and is NaN where B * I vanishes or was not
// computed.
std::vector<double> smear_moment1(const std::vector<double>& velocity,
                                  const std::vector<double>& intensity, int nx, int ny,
                                  const Eigen::Matrix2d& pixel_cov,
                                  const std::vector<unsigned char>& where = {},
                                  double truncate_sigma = 4.0);

// The same for several fields at once with one intensity: fields[c] holds
// field c (nx * ny, every value finite); the result's [c] is field c smeared.
// B * I is computed once for all fields (the Jacobian's columns,
// centre_covariance.cpp), so p fields cost about (p + 1) / 2 single ones.
// Every result is bit for bit that of smear_moment1 on its field.
std::vector<std::vector<double>> smear_moment1_fields(const std::vector<std::vector<double>>& fields,
                                                      const std::vector<double>& intensity, int nx, int ny,
                                                      const Eigen::Matrix2d& pixel_cov,
                                                      const std::vector<unsigned char>& where = {},
                                                      double truncate_sigma = 4.0);

// The part of the velocity map the correction works on: the bounding box of
// the samples' pixels grown by the kernel's reach, with every box pixel's sky
// offset and intensity weight.
struct SmearingGrid {
  int x0 = 0, y0 = 0;            // box origin in the map, 0-based
  int nx = 0, ny = 0;            // box size
  std::vector<double> east, north;       // arcsec from the reference, per box pixel
  std::vector<double> intensity;         // >= 0 per box pixel (0: no emission)
  std::vector<unsigned char> wanted;     // box pixels that hold a sample
  std::vector<std::size_t> sample_pixel; // box index of each sample
  Eigen::Matrix2d pixel_cov = Eigen::Matrix2d::Identity();  // the beam, pixel^2
  Beam beam;
  bool from_intensity_map = false;
  std::string weighting;         // what I is, in words (for the JSON)
  std::string note;              // e.g. the intensity map was resampled
  bool usable() const { return !sample_pixel.empty(); }
};

// Build the grid for the samples `s` of `velocity` (made about `reference`,
// velocity_samples.hpp) with beam `beam`. `intensity` may be null (uniform
// weight over the footprint) or a line-intensity map on any celestial grid.
// Throws InputError when the intensity map has no WCS or no positive pixel
// under the footprint.
SmearingGrid make_smearing_grid(const Image& velocity, const VelocitySamples& s,
                                WorldCoord reference, const Beam& beam, const Image* intensity);

// Delta at every sample (km/s): the fitted global model smeared with the
// grid's intensity and beam, minus the model itself.
std::vector<double> smearing_correction(const SmearingGrid& grid, const GlobalFitSummary& fit);

}  // namespace fulcrum::kinematics
