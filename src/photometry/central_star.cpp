// Foreground stars near the galaxy's centre (see central_star.hpp).
#include "fulcrum/photometry/central_star.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

#include "fulcrum/photometry/background.hpp"
#include "fulcrum/photometry/point_source_fit.hpp"
#include "fulcrum/photometry/source_mask.hpp"

namespace fulcrum::photometry {

namespace {

// Unweighted centroid of the galaxy pixels brighter (in `s`) than the level
// that encloses half of the segment's area (its median).
PixelCoord outer_isophote_centre(const std::vector<double>& s, int nx, const std::vector<std::uint8_t>& galaxy,
                                 const std::vector<PixelCoord>& holes = {}, double hole_r = 0.0) {
  std::vector<double> v;
  for (std::size_t i = 0; i < s.size(); ++i)
    if (galaxy[i] && std::isfinite(s[i])) v.push_back(s[i]);
  if (v.empty()) return {};
  // The brightest half of the segment: small enough to stay clear of the
  // image edges when the galaxy's wings fill the field.
  const std::size_t h = v.size() / 2;
  std::nth_element(v.begin(), v.begin() + h, v.end());
  const double level = v[h];
  auto in_hole = [&](std::size_t i) {
    for (const auto& hole : holes)
      if (std::hypot(static_cast<double>(i % nx) - hole.x, static_cast<double>(i / nx) - hole.y) < hole_r) return true;
    return false;
  };
  double sx = 0, sy = 0, n = 0;
  for (std::size_t i = 0; i < s.size(); ++i)
    if (galaxy[i] && std::isfinite(s[i]) && s[i] >= level && !in_hole(i)) {
      sx += static_cast<double>(i % nx);
      sy += static_cast<double>(i / nx);
      n += 1;
    }
  return {sx / n, sy / n};
}

bool band_maximum(const std::vector<double>& band, int nx, int ny, int x, int y) {
  if (x == 0 || y == 0 || x == nx - 1 || y == ny - 1) return false;
  const double b = band[x + nx * y];
  for (int dy = -1; dy <= 1; ++dy)
    for (int dx = -1; dx <= 1; ++dx) {
      if (dx == 0 && dy == 0) continue;
      const double nb = band[(x + dx) + nx * (y + dy)];
      if (std::isfinite(nb) && nb >= b) return false;
    }
  return true;
}

}  // namespace

CentralStars find_central_stars(const std::vector<double>& data, int nx, int ny, const Eigen::Matrix2d& jac,
                                double psf_fwhm, const std::vector<std::uint8_t>& galaxy, double pixel_rms,
                                const CentralStarOptions& o, const std::vector<double>* smoothed,
                                const std::vector<double>* smoothed_wide) {
  CentralStars out;
  const double scale = std::sqrt(std::abs(jac.determinant()));
  const double fwhm_px = psf_fwhm / scale;
  std::vector<double> own_s, own_sw;
  if (!smoothed) own_s = smooth_to_fwhm(data, nx, ny, jac, psf_fwhm);
  if (!smoothed_wide) own_sw = smooth_to_fwhm(data, nx, ny, jac, psf_fwhm * o.wide_factor);
  const std::vector<double>& s = smoothed ? *smoothed : own_s;
  const std::vector<double>& sw = smoothed_wide ? *smoothed_wide : own_sw;
  out.outer_centre = outer_isophote_centre(s, nx, galaxy);
  std::vector<double> band(data.size(), std::numeric_limits<double>::quiet_NaN());
  for (std::size_t i = 0; i < data.size(); ++i)
    if (std::isfinite(s[i]) && std::isfinite(sw[i])) band[i] = s[i] - sw[i];
  const double band_rms = estimate_background(band, {}).rms;
  if (!(band_rms > 0.0) || !(pixel_rms > 0.0)) return out;
  const double search = o.search_radius_fwhm * fwhm_px;
  // Every point source in reach (the nucleus may be one of them).
  std::vector<PointSourceFit> points;
  for (int y = 0; y < ny; ++y)
    for (int x = 0; x < nx; ++x) {
      const int i = x + nx * y;
      if (!galaxy[i] || !(band[i] > o.band_sigma * band_rms)) continue;
      if (std::hypot(x - out.outer_centre.x, y - out.outer_centre.y) > search + fwhm_px) continue;
      if (!band_maximum(band, nx, ny, x, y)) continue;
      PointSourceFitOptions fo;
      fo.radius_pixels = std::max(2.5, fwhm_px + 1.0);  // small: the galaxy is not a plane farther out
      fo.start_fwhm_arcsec = psf_fwhm;
      fo.fit_plane = true;
      const PointSourceFit f =
          fit_point_source(data, nx, ny, jac, {static_cast<double>(x), static_cast<double>(y)}, pixel_rms, fo);
      if (!f.ok || std::hypot(f.centre.x - x, f.centre.y - y) > 0.5 * fwhm_px + 1.0) continue;
      // Resolved: the galaxy. At most 15% whatever the option: an n = 4
      // nucleus seen through the PSF fits ~20-25% broader than the PSF.
      if (std::abs(f.fwhm_arcsec / psf_fwhm - 1.0) > std::min(o.fwhm_tolerance, 0.15)) continue;
      if (f.amplitude < o.min_peak_snr * pixel_rms) continue;
      points.push_back(f);
    }
  // The outer centre again without a disc of 1.5 FWHM about each point
  // source: a star no longer drags it, and a nucleus at the centre leaves a
  // symmetric hole that does not move it.
  std::vector<PixelCoord> holes;
  for (const auto& f : points) holes.push_back(f.centre);
  out.outer_centre = outer_isophote_centre(s, nx, galaxy, holes, 1.5 * fwhm_px);
  for (const auto& f : points) {
    const double off = std::hypot(f.centre.x - out.outer_centre.x, f.centre.y - out.outer_centre.y);
    if (off < o.min_offset_fwhm * fwhm_px || off > search) continue;  // on the centre: the nucleus
    CentralStar st;
    st.centre = f.centre;
    st.fwhm_arcsec = f.fwhm_arcsec;
    st.peak_snr = f.amplitude / pixel_rms;
    st.offset_arcsec = off * scale;
    // The star is subtracted (prepared_image.cpp); only its core, where a
    // real PSF departs most from the Gaussian, is masked.
    st.mask_radius_pixels = std::max(1.0, 0.6 * fwhm_px);
    out.stars.push_back(st);
  }
  return out;
}

}  // namespace fulcrum::photometry
