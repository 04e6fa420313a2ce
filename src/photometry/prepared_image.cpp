// The image made ready for the centre estimators (see prepared_image.hpp).
#include "fulcrum/photometry/prepared_image.hpp"

#include <Eigen/Eigenvalues>
#include <algorithm>
#include <cmath>
#include <deque>
#include <limits>
#include <numbers>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/photometry/point_source_fit.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::photometry {

double bilinear(const std::vector<double>& d, int nx, int ny, double x, double y) {
  const double fx = std::floor(x), fy = std::floor(y);
  const int x0 = static_cast<int>(fx), y0 = static_cast<int>(fy);
  if (x0 < 0 || y0 < 0 || x0 + 1 >= nx || y0 + 1 >= ny) {
    // On the last row/column exactly: allow a degenerate interpolation.
    if (x0 >= 0 && y0 >= 0 && x0 < nx && y0 < ny && x == fx && y == fy) return d[x0 + nx * y0];
    return std::numeric_limits<double>::quiet_NaN();
  }
  const double tx = x - fx, ty = y - fy;
  const double v00 = d[x0 + nx * y0], v10 = d[x0 + 1 + nx * y0];
  const double v01 = d[x0 + nx * (y0 + 1)], v11 = d[x0 + 1 + nx * (y0 + 1)];
  return (1 - ty) * ((1 - tx) * v00 + tx * v10) + ty * ((1 - tx) * v01 + tx * v11);
}

namespace {

template <class T>
std::vector<T> cut(const std::vector<T>& v, int nx, const PixelBox& b) {
  std::vector<T> out;
  if (v.empty()) return out;
  out.reserve(static_cast<std::size_t>(b.x1 - b.x0 + 1) * (b.y1 - b.y0 + 1));
  for (int y = b.y0; y <= b.y1; ++y)
    for (int x = b.x0; x <= b.x1; ++x) out.push_back(v[static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y]);
  return out;
}

}  // namespace

PreparedImage cut_out(const PreparedImage& p, const PixelBox& b) {
  PreparedImage c;
  c.nx = b.x1 - b.x0 + 1;
  c.ny = b.y1 - b.y0 + 1;
  c.data = cut(p.data, p.nx, b);
  c.galaxy = cut(p.galaxy, p.nx, b);
  c.user_masked = cut(p.user_masked, p.nx, b);
  c.auto_masked = cut(p.auto_masked, p.nx, b);
  c.jacobian = p.jacobian;
  c.pixel_scale_arcsec = p.pixel_scale_arcsec;
  c.psf_fwhm_arcsec = p.psf_fwhm_arcsec;
  c.background = p.background;
  c.sources = p.sources;
  c.ok = p.ok;
  c.reason = p.reason;
  c.saturated = p.saturated;
  c.saturated_pixels = p.saturated_pixels;
  c.guess = {p.guess.x - b.x0, p.guess.y - b.y0};
  c.radius_arcsec = p.radius_arcsec;
  c.axis_ratio = p.axis_ratio;
  c.pa_deg = p.pa_deg;
  c.total_flux = p.total_flux;
  return c;
}

void cut_values(const std::vector<double>& data, int nx, const PixelBox& b, std::vector<double>& out) {
  out.resize(static_cast<std::size_t>(b.x1 - b.x0 + 1) * (b.y1 - b.y0 + 1));
  std::size_t k = 0;
  for (int y = b.y0; y <= b.y1; ++y)
    for (int x = b.x0; x <= b.x1; ++x) out[k++] = data[static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y];
}

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Largest connected (8-neighbour) group of galaxy pixels whose raw value is
// at least `level`.
int largest_group_at_or_above(const Image& im, const std::vector<std::uint8_t>& galaxy,
                              double level) {
  std::vector<std::uint8_t> seen(im.size(), 0);
  int best = 0;
  std::deque<int> q;
  for (int s = 0; s < static_cast<int>(im.size()); ++s) {
    if (seen[s] || !galaxy[s] || !(im.data[s] >= level)) continue;
    int count = 0;
    seen[s] = 1;
    q.push_back(s);
    while (!q.empty()) {
      const int i = q.front();
      q.pop_front();
      ++count;
      const int x = i % im.nx, y = i / im.nx;
      for (int dy = -1; dy <= 1; ++dy)
        for (int dx = -1; dx <= 1; ++dx) {
          const int xx = x + dx, yy = y + dy;
          if (!im.contains(xx, yy)) continue;
          const int j = xx + im.nx * yy;
          if (seen[j] || !galaxy[j] || !(im.data[j] >= level)) continue;
          seen[j] = 1;
          q.push_back(j);
        }
    }
    best = std::max(best, count);
  }
  return best;
}

// A star near the galaxy's centre (central_star.hpp) is subtracted rather
// than masked, so the nucleus next to it stays usable: a circular Gaussian
// plus a plane refitted at it (point_source_fit.hpp), its Gaussian part
// taken away out to 5 FWHM.
void subtract_point_source(PreparedImage& p, const MaskedSource& m) {
  const double fwhm_px = p.psf_fwhm_arcsec / p.pixel_scale_arcsec;
  PointSourceFitOptions fo;
  fo.radius_pixels = std::max(2.5, fwhm_px + 1.0);
  fo.start_fwhm_arcsec = m.fwhm_arcsec > 0 ? m.fwhm_arcsec : p.psf_fwhm_arcsec;
  fo.fit_plane = true;
  const PointSourceFit f = fit_point_source(p.data, p.nx, p.ny, p.jacobian, m.centre, p.background.rms, fo);
  if (!f.ok) return;
  const double s = f.fwhm_arcsec / 2.3548200450309493, r = 5.0 * f.fwhm_arcsec / p.pixel_scale_arcsec;
  for (int y = std::max(0, static_cast<int>(f.centre.y - r)); y <= std::min(p.ny - 1, static_cast<int>(f.centre.y + r) + 1); ++y)
    for (int x = std::max(0, static_cast<int>(f.centre.x - r)); x <= std::min(p.nx - 1, static_cast<int>(f.centre.x + r) + 1); ++x) {
      const Eigen::Vector2d d = p.to_sky(x - f.centre.x, y - f.centre.y);
      p.data[x + p.nx * y] -= f.amplitude * std::exp(-d.squaredNorm() / (2.0 * s * s));
    }
}

// Saturation of the galaxy: at or above a known level, or a clipped core
// (a plateau of equal maxima); sets p.saturated and p.reason.
void check_saturation(const Image& image, const PreparationOptions& o, PreparedImage& p) {
  const std::size_t n = image.size();
  double sat = kNaN;
  if (o.saturation_level) sat = *o.saturation_level;
  else if (auto h = header_value(image.header, "SATURATE")) {
    try {
      sat = std::stod(*h);
    } catch (...) {
      sat = kNaN;
    }
  }
  if (std::isfinite(sat)) {
    int count = 0;
    for (std::size_t i = 0; i < n; ++i)
      if (p.galaxy[i] && image.data[i] >= sat) ++count;
    if (count > 0) {
      p.saturated = true;
      p.saturated_pixels = count;
      p.reason = "saturated: " + std::to_string(count) +
                 " galaxy pixel(s) at or above the saturation level " + significant_text(sat, 6);
    }
  } else {
    double gmax = -std::numeric_limits<double>::infinity();
    for (std::size_t i = 0; i < n; ++i)
      if (p.galaxy[i] && std::isfinite(image.data[i])) gmax = std::max(gmax, image.data[i]);
    const int plateau = largest_group_at_or_above(image, p.galaxy, gmax);
    if (plateau >= o.plateau_pixels) {
      p.saturated = true;
      p.saturated_pixels = plateau;
      p.reason = "saturated: " + std::to_string(plateau) +
                 " connected galaxy pixels sit at the same maximum value " + significant_text(gmax, 6) +
                 " (a clipped core)";
    }
  }
}

}  // namespace

PreparedImage prepare_image(const Image& image, const Image* mask, const PreparationOptions& o) {
  const std::string src = image.path.empty() ? std::string("optical image") : image.path;
  if (image.nx < 8 || image.ny < 8 || image.data.size() != image.size())
    throw InputError(src, "the optical image must be at least 8x8 pixels (got " +
                              std::to_string(image.nx) + "x" + std::to_string(image.ny) + ")");
  if (!image.wcs.valid()) throw InputError(src, "the optical image has no celestial WCS");
  if (!(o.psf_fwhm_arcsec > 0.0) || !std::isfinite(o.psf_fwhm_arcsec))
    throw InputError(src, "the PSF FWHM must be a positive number of arcsec (got " +
                              significant_text(o.psf_fwhm_arcsec, 6) + "); give the psf_fwhm_arcsec setting");
  if (mask && (mask->nx != image.nx || mask->ny != image.ny)) {
    const std::string msrc = mask->path.empty() ? std::string("mask") : mask->path;
    throw InputError(msrc, "the mask is " + std::to_string(mask->nx) + "x" +
                               std::to_string(mask->ny) + " pixels but the image is " +
                               std::to_string(image.nx) + "x" + std::to_string(image.ny));
  }
  if (static_cast<int>(image.finite_count()) < o.min_finite_pixels)
    throw InputError(src, "the optical image has only " + std::to_string(image.finite_count()) +
                              " finite pixels (at least " + std::to_string(o.min_finite_pixels) +
                              " are needed)");

  PreparedImage p;
  p.nx = image.nx;
  p.ny = image.ny;
  p.psf_fwhm_arcsec = o.psf_fwhm_arcsec;
  const std::size_t n = image.size();
  const WorldCoord ref =
      image.wcs.pixel_to_world({0.5 * (image.nx - 1), 0.5 * (image.ny - 1)});
  const PixelOffsets offsets(image, ref);
  p.jacobian = offsets.jacobian();
  p.pixel_scale_arcsec = offsets.pixel_scale_arcsec();
  if (!(std::abs(p.jacobian.determinant()) > 0.0))
    throw InputError(src, "the WCS of the optical image is singular at the image centre");

  p.user_masked.assign(n, 0);
  if (mask)
    for (std::size_t i = 0; i < n; ++i) {
      const double m = mask->data[i];
      p.user_masked[i] = (!std::isfinite(m) || m != 0.0) ? 1 : 0;
    }
  p.auto_masked.assign(n, 0);
  p.galaxy.assign(n, 0);

  // Flat image: nothing varies, nothing can be measured.
  double vmin = std::numeric_limits<double>::infinity(), vmax = -vmin;
  for (std::size_t i = 0; i < n; ++i)
    if (std::isfinite(image.data[i]) && !p.user_masked[i]) {
      vmin = std::min(vmin, image.data[i]);
      vmax = std::max(vmax, image.data[i]);
    }
  p.data.assign(n, kNaN);
  if (!(vmax > vmin)) {
    p.reason = "flat image: every usable pixel has the value " + significant_text(vmin, 6);
    return p;
  }

  // Two passes: sky from all pixels, detect, sky again without the sources.
  std::vector<std::uint8_t> exclude = p.user_masked;
  for (int pass = 0; pass < 2; ++pass) {
    p.background = estimate_background(image.data, exclude, o.background);
    for (std::size_t i = 0; i < n; ++i)
      p.data[i] = (std::isfinite(image.data[i]) && !p.user_masked[i])
                      ? image.data[i] - p.background.level
                      : kNaN;
    if (!(p.background.rms > 0.0)) {
      p.reason = "flat image: the sky has no measurable noise (rms 0 about " +
                 significant_text(p.background.level, 6) + ")";
      return p;
    }
    SourceMaskOptions so = o.sources;
    if (!o.automatic_masking) so.mask_stars_on_galaxy = false;
    p.sources = find_and_mask_sources(p.data, p.nx, p.ny, p.jacobian, p.psf_fwhm_arcsec, so);
    if (pass == 0) {
      // Exclude everything detected, the galaxy grown by two PSF FWHMs.
      exclude = p.user_masked;
      const double grow = 2.0 * p.psf_fwhm_arcsec / p.pixel_scale_arcsec;
      const int g = static_cast<int>(std::ceil(grow));
      for (int y = 0; y < p.ny; ++y)
        for (int x = 0; x < p.nx; ++x) {
          const int i = x + p.nx * y;
          if (p.sources.masked[i]) exclude[i] = 1;
          if (!p.sources.galaxy[i]) continue;
          for (int dy = -g; dy <= g; ++dy)
            for (int dx = -g; dx <= g; ++dx) {
              const int xx = x + dx, yy = y + dy;
              if (xx < 0 || yy < 0 || xx >= p.nx || yy >= p.ny) continue;
              if (dx * dx + dy * dy <= grow * grow) exclude[xx + p.nx * yy] = 1;
            }
        }
    }
  }
  p.galaxy = p.sources.galaxy;
  if (o.automatic_masking)
    for (const auto& m : p.sources.sources)
      if (m.near_centre) subtract_point_source(p, m);
  if (o.automatic_masking) p.auto_masked = p.sources.masked;
  for (std::size_t i = 0; i < n; ++i)
    if (p.auto_masked[i] && !p.user_masked[i]) p.data[i] = kNaN;
  if (!p.sources.galaxy_found) {
    p.reason = p.sources.reason;
    return p;
  }

  check_saturation(image, o, p);
  if (p.saturated) return p;

  // First guesses from the segment's light-weighted moments.
  double sw = 0, sx = 0, sy = 0;
  int area = 0;
  for (int y = 0; y < p.ny; ++y)
    for (int x = 0; x < p.nx; ++x) {
      const int i = x + p.nx * y;
      if (!p.galaxy[i]) continue;
      ++area;
      if (!std::isfinite(p.data[i]) || p.data[i] <= 0) continue;
      sw += p.data[i];
      sx += p.data[i] * x;
      sy += p.data[i] * y;
    }
  if (!(sw > 0)) {
    p.reason = "no galaxy: the galaxy's segment is fully masked";
    return p;
  }
  p.total_flux = sw;
  p.guess = {sx / sw, sy / sw};
  Eigen::Matrix2d m = Eigen::Matrix2d::Zero();
  for (int y = 0; y < p.ny; ++y)
    for (int x = 0; x < p.nx; ++x) {
      const int i = x + p.nx * y;
      if (!p.galaxy[i] || !std::isfinite(p.data[i]) || p.data[i] <= 0) continue;
      const Eigen::Vector2d d = p.to_sky(x - p.guess.x, y - p.guess.y);
      m += p.data[i] * d * d.transpose();
    }
  m /= sw;
  Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(m);
  const double lmin = std::max(es.eigenvalues()(0), 1e-12), lmax = std::max(es.eigenvalues()(1), 1e-12);
  p.axis_ratio = std::sqrt(lmin / lmax);
  const Eigen::Vector2d major = es.eigenvectors().col(1);
  p.pa_deg = std::fmod(std::atan2(major(0), major(1)) * 180.0 / std::numbers::pi + 360.0, 180.0);
  p.radius_arcsec = std::sqrt(area * p.pixel_scale_arcsec * p.pixel_scale_arcsec / std::numbers::pi);
  p.ok = true;
  return p;
}

}  // namespace fulcrum::photometry
