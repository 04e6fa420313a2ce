// A small velocity-field generator for the kinematics tests, written from
// the published tilted-ring formula (Begeman 1989) with an arctangent
// rotation curve vrot(R) = vflat (2/pi) atan(R / r_turn) (common practice).
// It stands in for synth/mock_galaxy.hpp where a test needs many fast draws.
//
// The map: nx x ny pixels of `pixel_arcsec`, SIN projection, the +y axis at
// PA `rotation_deg` on the sky, optionally flipped. The disc (true centre
// offset from the grid centre by `centre_offset` arcsec east/north) has a
// Gaussian-beam-smeared velocity field (intensity-weighted with an
// exponential disc, so the smearing is that of a moment-1 map; the disc is
// returned as the intensity map), plus noise
// that is white before the beam and rescaled to `noise_kms` rms per pixel
// (so it is correlated like a real map's), blanked beyond `disc_radius` and
// in random circular holes covering about `hole_fraction` of the disc.
// Units: arcsec, degrees, km/s.
#pragma once

#include <cmath>
#include <numbers>
#include <random>
#include <vector>

#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/io/image.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::test {

struct VelocityMockSpec {
  int nx = 64, ny = 64;
  double pixel_arcsec = 0.5;
  double rotation_deg = 0.0;
  bool flip = false;
  WorldCoord grid_centre{150.0, 20.0};
  SkyOffset centre_offset{0.0, 0.0};  // true centre minus grid centre, arcsec
  double pa_deg = 60.0, inc_deg = 55.0, vsys_kms = 7000.0;
  double vflat_kms = 180.0, r_turn_arcsec = 3.0;
  double vrad_kms = 0.0;               // constant radial term (sin theta)
  double scale_length_arcsec = 6.0;
  double disc_radius_arcsec = 13.0;
  Beam beam{2.0, 1.6, 20.0};
  bool smear = true;
  double noise_kms = 5.0;
  // When true, the noise rms is noise_kms at the disc edge and falls inwards
  // as 1 / (line S/N) with the exponential disc, sigma(R) = noise_kms *
  // exp((R - disc_radius) / scale_length) (as a moment-1 map's error does),
  // floored at noise_floor_kms.
  bool snr_scaled_noise = false;
  double noise_floor_kms = 0.5;
  double hole_fraction = 0.0;
  unsigned seed = 1;
};

struct VelocityMock {
  Image velocity;
  Image velocity_error;
  // The line intensity the velocity field was smeared with (the exponential
  // disc, unmasked, arbitrary units), on the same grid: what a moment-0 map
  // gives the fit (fit_kinematics' `intensity`).
  Image intensity;
  WorldCoord true_centre;
};

inline double mock_vrot(const VelocityMockSpec& s, double R) {
  return s.vflat_kms * (2.0 / std::numbers::pi) * std::atan(R / s.r_turn_arcsec);
}

inline double noise_at(const VelocityMockSpec& s, double R) {
  if (!s.snr_scaled_noise) return s.noise_kms;
  return std::max(s.noise_floor_kms,
                  s.noise_kms * std::exp((R - s.disc_radius_arcsec) / s.scale_length_arcsec));
}

inline CelestialWcs mock_wcs(const VelocityMockSpec& s) {
  // CD rows are the (RA, Dec) intermediate axes, i.e. (east, north) in
  // degrees; columns are the pixel axes x, y.
  const double rot = s.rotation_deg * std::numbers::pi / 180.0;
  const double p = s.pixel_arcsec / 3600.0;
  // +y points to PA rot: (east, north) = (sin rot, cos rot); +x is 90 deg
  // clockwise on the sky from +y for the usual parity (east left): +x at PA
  // rot - 90, i.e. (east, north) = (-cos rot, sin rot); flipped: the opposite.
  const double xe = s.flip ? std::cos(rot) : -std::cos(rot), xn = s.flip ? -std::sin(rot) : std::sin(rot);
  const double ye = std::sin(rot), yn = std::cos(rot);
  const double cd[2][2] = {{p * xe, p * ye}, {p * xn, p * yn}};
  return CelestialWcs::from_cd("SIN", {0.5 * (s.nx - 1), 0.5 * (s.ny - 1)}, s.grid_centre, cd);
}

inline VelocityMock make_velocity_mock(const VelocityMockSpec& s) {
  VelocityMock m;
  Image& v = m.velocity;
  v.nx = s.nx;
  v.ny = s.ny;
  v.wcs = mock_wcs(s);
  v.beam = s.beam;
  v.unit = "km/s";
  v.data.assign(v.size(), 0.0);
  const OffsetFrame frame(s.grid_centre);
  m.true_centre = frame.to_world(s.centre_offset);
  PixelOffsets off(v, s.grid_centre);
  const double pa = s.pa_deg * std::numbers::pi / 180.0, inc = s.inc_deg * std::numbers::pi / 180.0;
  std::vector<double> flux(v.size()), fv(v.size()), radius(v.size());
  for (int y = 0; y < s.ny; ++y)
    for (int x = 0; x < s.nx; ++x) {
      const SkyOffset o = off.at(x, y) - s.centre_offset;
      const double X = o.east * std::sin(pa) + o.north * std::cos(pa);
      const double Y = (o.east * std::cos(pa) - o.north * std::sin(pa)) / std::cos(inc);
      const double R = std::hypot(X, Y);
      double vel = s.vsys_kms;
      if (R > 0) vel += std::sin(inc) * (mock_vrot(s, R) * X / R + s.vrad_kms * Y / R);
      const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(s.nx) * y;
      flux[i] = std::exp(-R / s.scale_length_arcsec);
      fv[i] = flux[i] * vel;
      radius[i] = R;
      v.data[i] = vel;
    }
  const Eigen::Matrix2d cov = pixel_covariance(s.beam, off.jacobian());
  if (s.smear) {
    const auto sf = convolve_gaussian(flux, s.nx, s.ny, cov);
    const auto sfv = convolve_gaussian(fv, s.nx, s.ny, cov);
    for (std::size_t i = 0; i < v.size(); ++i) v.data[i] = sfv[i] / sf[i];
  }
  std::mt19937_64 rng(s.seed);
  if (s.noise_kms > 0) {
    std::normal_distribution<double> gauss(0.0, 1.0);
    std::vector<double> n(v.size());
    for (double& e : n) e = gauss(rng);
    auto sn = convolve_gaussian(n, s.nx, s.ny, cov);
    // Rescale to unit rms: the kernel is normalised to unit sum, so the rms
    // of smoothed white noise is sqrt(sum k^2); measure it from the kernel
    // by smoothing a delta.
    std::vector<double> delta(v.size(), 0.0);
    delta[static_cast<std::size_t>(s.nx / 2) + static_cast<std::size_t>(s.nx) * (s.ny / 2)] = 1.0;
    const auto k = convolve_gaussian(delta, s.nx, s.ny, cov);
    double k2 = 0;
    for (double w : k) k2 += w * w;
    const double norm = 1.0 / std::sqrt(k2);
    for (std::size_t i = 0; i < v.size(); ++i) v.data[i] += noise_at(s, radius[i]) * norm * sn[i];
  }
  // Mask: outside the disc and in holes.
  const double nan = std::numeric_limits<double>::quiet_NaN();
  std::vector<std::pair<SkyOffset, double>> holes;
  if (s.hole_fraction > 0) {
    const double disc_area = std::numbers::pi * s.disc_radius_arcsec * s.disc_radius_arcsec *
                             std::cos(inc);
    const double hole_r = s.beam.fwhm_arcsec();
    const int n_holes = static_cast<int>(std::lround(s.hole_fraction * disc_area /
                                                     (std::numbers::pi * hole_r * hole_r)));
    std::uniform_real_distribution<double> u(-s.disc_radius_arcsec, s.disc_radius_arcsec);
    for (int h = 0; h < n_holes; ++h)
      holes.push_back({SkyOffset{u(rng), u(rng)} + s.centre_offset, hole_r});
  }
  for (int y = 0; y < s.ny; ++y)
    for (int x = 0; x < s.nx; ++x) {
      const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(s.nx) * y;
      bool keep = radius[i] <= s.disc_radius_arcsec;
      for (const auto& [c, r] : holes)
        if ((off.at(x, y) - c).norm() < r) keep = false;
      if (!keep) v.data[i] = nan;
    }
  m.intensity = v.like(0.0);
  m.intensity.unit = "Jy/beam.km/s";
  m.intensity.data = flux;
  m.velocity_error = v.like(1.0);
  for (std::size_t i = 0; i < v.size(); ++i) {
    if (s.noise_kms > 0) m.velocity_error.data[i] = noise_at(s, radius[i]);
    if (!std::isfinite(v.data[i])) m.velocity_error.data[i] = nan;
  }
  return m;
}

}  // namespace fulcrum::test
