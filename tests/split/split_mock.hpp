// A tiny in-test mock line map for the split and robustness tests (invented
// data): an inclined exponential disc with a lopsided term
//   Sigma(R, phi) = exp(-R/h) (1 + eps cos(phi - phi_lead)),
// phi the sky PA about the true centre, phi_lead = tail PA + 180 deg, sampled
// on a CelestialWcs::from_cd grid (optionally rotated / flipped), convolved
// with the Gaussian beam, in Jy/beam km/s, plus beam-correlated Gaussian
// noise: white noise convolved with a Gaussian of half the beam covariance
// (so that its autocorrelation has the beam's shape) scaled to `rms`.
#pragma once

#include <cmath>
#include <numbers>
#include <random>

#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/io/image.hpp"
#include "fulcrum/core/random.hpp"
#include "fulcrum/sky/ellipse.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"
#include "fulcrum/split/half_split.hpp"

namespace fulcrum::test {

struct TinyMock {
  int nx = 48, ny = 48;
  double pixel_arcsec = 0.5;
  double rotation_deg = 0.0;  // PA of +y
  bool flip = false;
  WorldCoord centre{150.0, 20.0};      // true centre (and CRVAL)
  SkyOffset grid_shift{0.3, -0.2};     // grid centre minus true centre (arcsec)
  double disc_pa_deg = 60.0, inc_deg = 50.0;
  double scale_arcsec = 4.0;
  double eps = 0.2;                    // lopsided amplitude (leading excess)
  double tail_pa_deg = 300.0;
  double bmaj = 2.0, bmin = 1.6, bpa = 20.0;
  double peak = 1.0;                   // Jy/beam km/s before the lopsided term
  double rms = 0.0;                    // noise, Jy/beam km/s
  double disc_fraction = 1.0;          // < 1: outer disc removed beyond this fraction of 4 h
  std::uint64_t seed = 7;
};

inline CelestialWcs tiny_wcs(const TinyMock& m) {
  const double s = m.pixel_arcsec / 3600.0;
  const double r = m.rotation_deg * std::numbers::pi / 180.0;
  // +x towards PA (rotation + 90 or -90 when flipped), +y towards PA rotation:
  // (east, north) of +y = (sin r, cos r); of +x = east-left parity: (-cos r, sin r).
  const double xe = m.flip ? std::cos(r) : -std::cos(r), xn = m.flip ? -std::sin(r) : std::sin(r);
  const double ye = std::sin(r), yn = std::cos(r);
  // CD rows: RA (east = +RA) and Dec; columns x, y.
  const double cd[2][2] = {{xe * s, ye * s}, {xn * s, yn * s}};
  // Grid centre at centre + grid_shift: crpix chosen so that CRVAL = true centre.
  const double det = xe * yn - ye * xn;
  const double gx = (yn * m.grid_shift.east - ye * m.grid_shift.north) / det / m.pixel_arcsec;
  const double gy = (-xn * m.grid_shift.east + xe * m.grid_shift.north) / det / m.pixel_arcsec;
  const PixelCoord crpix{0.5 * (m.nx - 1) - gx, 0.5 * (m.ny - 1) - gy};
  return CelestialWcs::from_cd("TAN", crpix, m.centre, cd);
}

struct TinyMockMaps {
  Image model;   // noise-free
  Image map;     // with noise
  Image error;   // rms per pixel
};

inline TinyMockMaps make_tiny_mock(const TinyMock& m) {
  TinyMockMaps out;
  Image img;
  img.nx = m.nx;
  img.ny = m.ny;
  img.wcs = tiny_wcs(m);
  img.beam = Beam{m.bmaj, m.bmin, m.bpa};
  img.unit = "Jy/beam km/s";
  img.path = "tiny-mock";
  img.data.assign(img.size(), 0.0);
  const PixelOffsets off(img, m.centre);
  const Angle pa = m.disc_pa_deg * degrees, inc = m.inc_deg * degrees;
  const double lead = (m.tail_pa_deg + 180.0) * std::numbers::pi / 180.0;
  const double rmax = 4.0 * m.scale_arcsec * m.disc_fraction;
  for (std::size_t i = 0; i < img.size(); ++i) {
    const SkyOffset p{off.east()[i], off.north()[i]};
    const DiscPoint d = disc_coordinates(p, {}, pa, inc);
    if (d.radius_arcsec > rmax) continue;
    const double phi = std::atan2(p.east, p.north);
    img.data[i] = std::exp(-d.radius_arcsec / m.scale_arcsec) * (1.0 + m.eps * std::cos(phi - lead));
  }
  // Beam convolution (unit-sum kernel) and scaling to the peak.
  const Eigen::Matrix2d J = off.jacobian();
  img.data = convolve_gaussian(img.data, img.nx, img.ny, pixel_covariance(*img.beam, J));
  for (double& v : img.data) v *= m.peak;
  out.model = img;
  out.map = img;
  out.error = img.like(m.rms);
  out.error.path = "tiny-mock-error";
  if (m.rms > 0.0) {
    const Beam half{m.bmaj / std::sqrt(2.0), m.bmin / std::sqrt(2.0), m.bpa};
    const Eigen::Matrix2d C = pixel_covariance(half, J);
    // rms of smoothed unit white noise = sqrt(sum k^2): from a delta image.
    std::vector<double> delta(img.size(), 0.0);
    delta[static_cast<std::size_t>(m.nx / 2) + static_cast<std::size_t>(m.nx) * (m.ny / 2)] = 1.0;
    double k2 = 0.0;
    for (double v : convolve_gaussian(delta, m.nx, m.ny, C)) k2 += v * v;
    fulcrum::Random g(m.seed);
    std::vector<double> w(img.size());
    for (double& v : w) v = g.normal();
    const auto sm = convolve_gaussian(w, m.nx, m.ny, C);
    for (std::size_t i = 0; i < img.size(); ++i) out.map.data[i] += m.rms * sm[i] / std::sqrt(k2);
  }
  return out;
}

// The engine tests' split problem: the noisy tiny mock (rms 0.05 Jy/beam
// km/s) on a grid rotated by `rotation_deg` (and flipped), split about its
// true centre, within the 8" x 60 deg x 0.64 test aperture when asked.
inline split::SplitProblem tiny_split_problem(double rotation_deg, bool flip = false, bool aperture = false) {
  TinyMock m;
  m.rotation_deg = rotation_deg;
  m.flip = flip;
  m.rms = 0.05;
  const auto maps = make_tiny_mock(m);
  split::SplitOptions so;
  so.centre = m.centre;
  so.rms = 0.05;
  if (aperture) so.aperture = split::ApertureSpec{8.0, 60.0, 0.64, std::nullopt};
  return split::prepare_split(maps.map, so);
}

}  // namespace fulcrum::test
