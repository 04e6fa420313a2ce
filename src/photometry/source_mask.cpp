// Galaxy detection and masking of other sources (see source_mask.hpp).
#include "fulcrum/photometry/source_mask.hpp"

#include <algorithm>
#include <cmath>
#include <deque>
#include <numbers>

#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/io/beam.hpp"
#include "fulcrum/photometry/background.hpp"

namespace fulcrum::photometry {

std::vector<double> smooth_to_fwhm(const std::vector<double>& data, int nx, int ny,
                                   const Eigen::Matrix2d& jacobian, double fwhm_arcsec) {
  const Beam kernel{fwhm_arcsec, fwhm_arcsec, 0.0};
  const Eigen::Matrix2d cov = pixel_covariance(kernel, jacobian);
  SmoothOptions opt;
  opt.normalise_missing = true;
  opt.fill_missing = false;
  opt.separable = true;  // a round kernel: along x, then y, on square pixels
  return convolve_gaussian(data, nx, ny, cov, opt);
}

namespace {

struct Segment {
  std::vector<int> pixels;
  double flux = 0.0;
};

std::vector<Segment> segments_above(const std::vector<double>& s, int nx, int ny, double thr,
                                    int min_pixels, std::vector<int>& label) {
  label.assign(s.size(), -1);
  std::vector<Segment> out;
  std::deque<int> queue;
  for (int start = 0; start < nx * ny; ++start) {
    if (label[start] != -1 || !(s[start] > thr)) continue;
    Segment seg;
    const int id = static_cast<int>(out.size());
    label[start] = id;
    queue.push_back(start);
    while (!queue.empty()) {
      const int i = queue.front();
      queue.pop_front();
      seg.pixels.push_back(i);
      const int x = i % nx, y = i / nx;
      for (int dy = -1; dy <= 1; ++dy)
        for (int dx = -1; dx <= 1; ++dx) {
          const int xx = x + dx, yy = y + dy;
          if (xx < 0 || yy < 0 || xx >= nx || yy >= ny) continue;
          const int j = xx + nx * yy;
          if (label[j] != -1 || !(s[j] > thr)) continue;
          label[j] = id;
          queue.push_back(j);
        }
    }
    if (static_cast<int>(seg.pixels.size()) < min_pixels) {
      for (int i : seg.pixels) label[i] = -2;  // too small: not a source
      continue;
    }
    out.push_back(std::move(seg));
  }
  return out;
}

void mark_disc(std::vector<std::uint8_t>& m, int nx, int ny, double cx, double cy, double r) {
  const int x0 = std::max(0, static_cast<int>(std::floor(cx - r)));
  const int x1 = std::min(nx - 1, static_cast<int>(std::ceil(cx + r)));
  const int y0 = std::max(0, static_cast<int>(std::floor(cy - r)));
  const int y1 = std::min(ny - 1, static_cast<int>(std::ceil(cy + r)));
  for (int y = y0; y <= y1; ++y)
    for (int x = x0; x <= x1; ++x)
      if ((x - cx) * (x - cx) + (y - cy) * (y - cy) <= r * r) m[x + nx * y] = 1;
}

// Point sources near the centre that are not the nucleus
// (central_star.hpp): masked in `out`, listed in its sources; returns the
// data with them blanked, for the search of the galaxy's core. `s`: the
// data smoothed to the PSF; `wide` receives the data smoothed to
// o.central.wide_factor times the PSF when the search made it (else empty).
std::vector<double> mask_central_stars(const std::vector<double>& data, const std::vector<double>& s, int nx,
                                       int ny, const Eigen::Matrix2d& jac, double psf_fwhm_arcsec, double pixel_rms,
                                       const SourceMaskOptions& o, SourceMaskSummary& out, std::vector<double>& wide) {
  std::vector<double> kept = data;
  wide.clear();
  if (!o.mask_stars_on_galaxy || !o.mask_central_stars) return kept;
  wide = smooth_to_fwhm(data, nx, ny, jac, psf_fwhm_arcsec * o.central.wide_factor);
  const CentralStars cs =
      find_central_stars(data, nx, ny, jac, psf_fwhm_arcsec, out.galaxy, pixel_rms, o.central, &s, &wide);
  out.outer_centre = cs.outer_centre;
  const double fwhm_px = psf_fwhm_arcsec / std::sqrt(std::abs(jac.determinant()));
  for (const auto& st : cs.stars) {
    // Farther out the star is masked whole by the search for stars on the
    // galaxy, which costs the nucleus nothing.
    if (std::hypot(st.centre.x - cs.outer_centre.x, st.centre.y - cs.outer_centre.y) > o.core_exclusion_fwhm * fwhm_px)
      continue;
    std::vector<std::uint8_t> disc(data.size(), 0);
    mark_disc(disc, nx, ny, st.centre.x, st.centre.y, st.mask_radius_pixels);
    for (std::size_t i = 0; i < data.size(); ++i)
      if (disc[i]) {
        out.masked[i] = 1;
        kept[i] = std::numeric_limits<double>::quiet_NaN();
      }
    MaskedSource m{st.centre, st.mask_radius_pixels, 0, true};
    m.near_centre = true;
    m.fwhm_arcsec = st.fwhm_arcsec;
    m.peak_snr = st.peak_snr;
    m.offset_arcsec = st.offset_arcsec;
    out.sources.push_back(m);
  }
  return kept;
}

// Stars projected on the galaxy away from its core: compact peaks of the
// band pass, each masked out to where a PSF of its amplitude meets the noise.
void mask_stars_on_galaxy(const std::vector<double>& data, const std::vector<double>& s,
                          const std::vector<double>& sw, int nx, int ny, const std::vector<int>& galaxy_pixels,
                          double sigma_px, double fwhm_px, double pixel_rms, const SourceMaskOptions& o,
                          SourceMaskSummary& out) {
  const std::size_t n = data.size();
  // Band pass: structure of the PSF's size survives, the galaxy's smooth
  // light mostly cancels. A PSF-shaped star of amplitude A gives a band
  // peak of A (1/2 - 1/(1 + w^2)) for circular Gaussians (w = wide factor).
  std::vector<double> band(n, std::numeric_limits<double>::quiet_NaN());
  for (std::size_t i = 0; i < n; ++i)
    if (std::isfinite(s[i]) && std::isfinite(sw[i])) band[i] = s[i] - sw[i];
  const BackgroundSummary bb = estimate_background(band, {});
  const double band_gain = 0.5 - 1.0 / (1.0 + o.wide_factor * o.wide_factor);
  const double core_r = o.core_exclusion_fwhm * fwhm_px;
  if (bb.rms > 0.0) {
    for (int i : galaxy_pixels) {
      const int x = i % nx, y = i / nx;
      if (x == 0 || y == 0 || x == nx - 1 || y == ny - 1 || out.masked[i]) continue;
      const double b = band[i];
      if (!(b > o.star_sigma * bb.rms) || !(b > o.star_fraction * s[i])) continue;
      if (std::hypot(x - out.brightest.x, y - out.brightest.y) < core_r) continue;
      bool is_max = true;
      for (int dy = -1; dy <= 1 && is_max; ++dy)
        for (int dx = -1; dx <= 1; ++dx) {
          if (dx == 0 && dy == 0) continue;
          const double nb = band[(x + dx) + nx * (y + dy)];
          if (std::isfinite(nb) && nb >= b) {
            is_max = false;
            break;
          }
        }
      if (!is_max) continue;
      const double amp = b / band_gain;
      const double ratio = pixel_rms > 0.0 ? std::max(amp / pixel_rms, 2.0) : 2.0;
      const double r = std::min(sigma_px * std::sqrt(2.0 * std::log(ratio)) + 1.0,
                                5.0 * fwhm_px);
      mark_disc(out.masked, nx, ny, x, y, r);
      out.sources.push_back({{static_cast<double>(x), static_cast<double>(y)}, r, 0, true});
    }
  }
}

}  // namespace

SourceMaskSummary find_and_mask_sources(const std::vector<double>& data, int nx, int ny,
                                        const Eigen::Matrix2d& jac, double psf_fwhm_arcsec,
                                        const SourceMaskOptions& o) {
  SourceMaskSummary out;
  const std::size_t n = data.size();
  out.galaxy.assign(n, 0);
  out.masked.assign(n, 0);

  const std::vector<double> s = smooth_to_fwhm(data, nx, ny, jac, psf_fwhm_arcsec);
  const BackgroundSummary sb = estimate_background(s, {});
  out.smoothed_rms = sb.rms;
  if (!(sb.rms > 0.0)) {
    out.reason = "no galaxy: the smoothed image has no noise and no structure";
    return out;
  }
  // Pixel size of the PSF: sigma^2 along the geometric mean of the pixel
  // covariance; its area pi FWHM^2 / (4 ln 2) in pixels.
  const Eigen::Matrix2d cpsf = pixel_covariance(Beam{psf_fwhm_arcsec, psf_fwhm_arcsec, 0.0}, jac);
  const double sigma_px = std::sqrt(std::sqrt(std::max(cpsf.determinant(), 1e-12)));
  const double fwhm_px = sigma_px * 2.0 * std::sqrt(2.0 * std::numbers::ln2);
  const double psf_area_px = std::numbers::pi * fwhm_px * fwhm_px / (4.0 * std::numbers::ln2);

  std::vector<int> label;
  const double thr = sb.level + o.detect_sigma * sb.rms;
  std::vector<Segment> segs = segments_above(s, nx, ny, thr, o.min_pixels, label);
  for (auto& seg : segs)
    for (int i : seg.pixels)
      if (std::isfinite(data[i])) seg.flux += data[i];

  // Extended: the light-weighted second moments of the segment (in pixels,
  // of the unsmoothed data) exceed those of the PSF, det(M)^(1/2) >
  // extended_size_ratio * sigma_psf^2 (a point source gives ~1).
  auto extended = [&](const Segment& seg) {
    double sw = 0, sx = 0, sy = 0;
    for (int i : seg.pixels)
      if (std::isfinite(data[i]) && data[i] > 0) {
        sw += data[i];
        sx += data[i] * (i % nx);
        sy += data[i] * (i / nx);
      }
    if (!(sw > 0)) return false;
    sx /= sw;
    sy /= sw;
    double mxx = 0, myy = 0, mxy = 0;
    for (int i : seg.pixels)
      if (std::isfinite(data[i]) && data[i] > 0) {
        const double dx = i % nx - sx, dy = i / nx - sy;
        mxx += data[i] * dx * dx;
        myy += data[i] * dy * dy;
        mxy += data[i] * dx * dy;
      }
    mxx /= sw;
    myy /= sw;
    mxy /= sw;
    const double size2 = std::sqrt(std::max(mxx * myy - mxy * mxy, 0.0));
    return size2 > o.extended_size_ratio * std::sqrt(cpsf.determinant());
  };

  int gal = -1;
  if (o.galaxy_hint) {
    const int hx = static_cast<int>(std::lround(o.galaxy_hint->x));
    const int hy = static_cast<int>(std::lround(o.galaxy_hint->y));
    if (hx >= 0 && hy >= 0 && hx < nx && hy < ny && label[hx + nx * hy] >= 0)
      gal = label[hx + nx * hy];
  }
  if (gal < 0) {
    double best = -1.0;
    for (int k = 0; k < static_cast<int>(segs.size()); ++k) {
      const double area = static_cast<double>(segs[k].pixels.size());
      if (area < o.extended_psf_areas * psf_area_px || !extended(segs[k])) continue;
      if (segs[k].flux > best) {
        best = segs[k].flux;
        gal = k;
      }
    }
  }
  if (gal < 0) {
    out.reason = segs.empty()
                     ? "no galaxy: nothing on the image rises " + std::to_string(o.detect_sigma) +
                           " sigma above the sky after smoothing to the PSF"
                     : "no galaxy: " + std::to_string(segs.size()) +
                           " source(s) detected, none extended (all are the size of the PSF)";
    // Still mask what was found, so a caller can inspect it.
  } else {
    out.galaxy_found = true;
  }

  // Mask every other segment, grown by grow_fwhm * FWHM.
  const double grow = o.grow_fwhm * fwhm_px;
  for (int k = 0; k < static_cast<int>(segs.size()); ++k) {
    if (k == gal) {
      for (int i : segs[k].pixels) out.galaxy[i] = 1;
      continue;
    }
    double sx = 0, sy = 0;
    for (int i : segs[k].pixels) {
      const int x = i % nx, y = i / nx;
      sx += x;
      sy += y;
      mark_disc(out.masked, nx, ny, x, y, grow);
    }
    const double m = static_cast<double>(segs[k].pixels.size());
    out.sources.push_back({{sx / m, sy / m}, 0.0, static_cast<int>(segs[k].pixels.size()), false});
  }
  if (gal < 0) return out;
  out.galaxy_area_pixels = static_cast<int>(segs[gal].pixels.size());

  const double pixel_rms = estimate_background(data, {}).rms;
  // Point sources near the centre that are not the nucleus: masked first,
  // and left out of everything below.
  const std::size_t sources_before = out.sources.size();
  std::vector<double> wide;
  const std::vector<double> kept =
      mask_central_stars(data, s, nx, ny, jac, psf_fwhm_arcsec, pixel_rms, o, out, wide);

  // The galaxy's core: the brightest point of the image smoothed with the
  // wide kernel, where a star's peak is diluted by 1/(1 + w^2) and an
  // extended core much less, so a bright star on the segment is not taken
  // for the nucleus. When no central star was blanked, `kept` is the data
  // and the central-star search's wide smoothing is this one.
  const bool reuse_wide = !wide.empty() && out.sources.size() == sources_before &&
                          o.central.wide_factor == o.wide_factor;
  const std::vector<double> sw =
      reuse_wide ? std::move(wide) : smooth_to_fwhm(kept, nx, ny, jac, psf_fwhm_arcsec * o.wide_factor);
  int ib = -1;
  for (int i : segs[gal].pixels)
    if (std::isfinite(sw[i]) && !out.masked[i] && (ib < 0 || sw[i] > sw[ib])) ib = i;
  if (ib < 0) ib = segs[gal].pixels.front();
  out.brightest = {static_cast<double>(ib % nx), static_cast<double>(ib / nx)};
  double smax = -1e300;
  for (int i : segs[gal].pixels)
    if (std::isfinite(s[i])) smax = std::max(smax, s[i]);
  out.galaxy_peak_snr = (smax - sb.level) / sb.rms;

  if (o.mask_stars_on_galaxy)
    mask_stars_on_galaxy(data, s, sw, nx, ny, segs[gal].pixels, sigma_px, fwhm_px, pixel_rms, o, out);
  return out;
}

}  // namespace fulcrum::photometry
