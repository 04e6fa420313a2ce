// The PSF FWHM measured from the stars of an optical image (see
// psf_estimate.hpp).
#include "fulcrum/photometry/psf_estimate.hpp"

#include <algorithm>
#include <cmath>
#include <deque>
#include <limits>
#include <numbers>
#include <unordered_set>

#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/photometry/background.hpp"
#include "fulcrum/photometry/point_source_fit.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::photometry {

namespace {

constexpr int kMinStars = 2;

struct Candidate {
  int x = 0, y = 0;
  double peak = 0.0;        // sky-subtracted
  int half_area = 0;        // connected pixels above half the peak
  int flat_top = 0;         // pixels equal to the maximum value
};

// Local maxima over a 5x5 window, above `thr`, away from the edge.
std::vector<Candidate> local_maxima(const std::vector<double>& d, int nx, int ny, double thr,
                                    const std::vector<std::uint8_t>* exclude) {
  std::vector<Candidate> out;
  for (int y = 3; y < ny - 3; ++y)
    for (int x = 3; x < nx - 3; ++x) {
      const double v = d[x + nx * y];
      if (!(v > thr) || (exclude && (*exclude)[x + nx * y])) continue;
      bool is_max = true;
      for (int dy = -2; dy <= 2 && is_max; ++dy)
        for (int dx = -2; dx <= 2; ++dx) {
          if (dx == 0 && dy == 0) continue;
          const double w = d[(x + dx) + nx * (y + dy)];
          // Ties: the first in scan order wins, so a flat top yields one candidate.
          if (w > v || (w == v && (dy < 0 || (dy == 0 && dx < 0)))) {
            is_max = false;
            break;
          }
        }
      if (is_max) out.push_back({x, y, v, 0, 0});
    }
  std::sort(out.begin(), out.end(), [](const Candidate& a, const Candidate& b) { return a.peak > b.peak; });
  return out;
}

// Connected (4-neighbour) pixels above half the peak, counted up to `cap`;
// also the pixels equal to the peak value among them.
void size_at_half_maximum(const std::vector<double>& d, int nx, int ny, Candidate& c, int cap) {
  const double half = 0.5 * c.peak;
  std::unordered_set<int> seen;
  std::deque<int> q{c.x + nx * c.y};
  seen.insert(q.front());
  while (!q.empty() && static_cast<int>(seen.size()) <= cap) {
    const int i = q.front();
    q.pop_front();
    ++c.half_area;
    if (d[i] == c.peak) ++c.flat_top;
    const int x = i % nx, y = i / nx;
    const int nb[4][2] = {{1, 0}, {-1, 0}, {0, 1}, {0, -1}};
    for (const auto& o : nb) {
      const int xx = x + o[0], yy = y + o[1];
      if (xx < 0 || yy < 0 || xx >= nx || yy >= ny) continue;
      const int j = xx + nx * yy;
      if (!(d[j] > half) || !seen.insert(j).second) continue;
      q.push_back(j);
    }
  }
}

// Light above `background` in the annulus [r1, r2] pixels about `c`, and
// the number of pixels summed.
std::pair<double, int> annulus_light(const std::vector<double>& d, int nx, int ny, PixelCoord c,
                                     double r1, double r2, double background) {
  double sum = 0.0;
  int n = 0;
  for (int y = std::max(0, static_cast<int>(c.y - r2)); y <= std::min(ny - 1, static_cast<int>(c.y + r2) + 1); ++y)
    for (int x = std::max(0, static_cast<int>(c.x - r2)); x <= std::min(nx - 1, static_cast<int>(c.x + r2) + 1); ++x) {
      const double rr = std::hypot(x - c.x, y - c.y);
      const double v = d[x + nx * y];
      if (rr < r1 || rr > r2 || !std::isfinite(v)) continue;
      sum += v - background;
      ++n;
    }
  return {sum, n};
}

// Whether a candidate is isolated from the other candidates.
bool isolated(const std::vector<Candidate>& all, std::size_t k, double radius, double fraction) {
  for (std::size_t j = 0; j < all.size(); ++j) {
    if (j == k) continue;
    if (all[j].peak > fraction * all[k].peak &&
        std::hypot(all[j].x - all[k].x, all[j].y - all[k].y) < radius)
      return false;
  }
  return true;
}

}  // namespace

namespace {

// Fit one candidate and decide whether it is a usable star.
PsfStar examine(const std::vector<double>& d, int nx, int ny, const Eigen::Matrix2d& jac, double scale,
                double rms, const Candidate& c, const PsfEstimateOptions& o) {
  PsfStar s;
  s.centre = {static_cast<double>(c.x), static_cast<double>(c.y)};
  const double guess_px = 2.0 * std::sqrt(c.half_area / std::numbers::pi);
  PointSourceFitOptions fo;
  fo.radius_pixels = std::clamp(1.5 * guess_px + 2.0, 4.0, 2.0 * o.max_fwhm_pixels);
  fo.start_fwhm_arcsec = std::max(guess_px, 1.0) * scale;
  PointSourceFit f = fit_point_source(d, nx, ny, jac, s.centre, rms, fo);
  if (f.ok && f.fwhm_arcsec / scale * 1.2 > fo.radius_pixels) {  // the disc was too small: once more
    fo.radius_pixels = std::min(1.5 * f.fwhm_arcsec / scale + 2.0, 2.0 * o.max_fwhm_pixels);
    fo.start_fwhm_arcsec = f.fwhm_arcsec;
    f = fit_point_source(d, nx, ny, jac, f.centre, rms, fo);
  }
  if (!f.ok) {
    s.rejected = f.reason;
    return s;
  }
  s.centre = f.centre;
  s.fwhm_arcsec = f.fwhm_arcsec;
  s.fwhm_err_arcsec = f.fwhm_err_arcsec;
  s.peak_snr = f.amplitude / rms;
  const double fwhm_px = f.fwhm_arcsec / scale;
  if (std::hypot(f.centre.x - c.x, f.centre.y - c.y) > 1.5) s.rejected = "the fit moved off the peak";
  else if (fwhm_px < 1.0) s.rejected = "sharper than one pixel (a hot pixel or cosmic ray)";
  else if (fwhm_px > o.max_fwhm_pixels) s.rejected = "too broad for a point source";
  else if (s.peak_snr < o.detect_sigma) s.rejected = "too faint once fitted";
  else if (f.background > o.max_background_fraction * f.amplitude)
    s.rejected = "sits on extended light (local background " + std::to_string(f.background / f.amplitude) +
                 " of its peak)";
  if (!s.rejected.empty()) return s;
  const double sig_px = fwhm_px / 2.3548200450309493;
  const double flux = f.amplitude * 2.0 * std::numbers::pi * sig_px * sig_px;
  const auto [wing, n] = annulus_light(d, nx, ny, f.centre, 1.5 * fwhm_px, 3.0 * fwhm_px, f.background);
  if (wing > o.max_wing_fraction * flux + 3.0 * rms * std::sqrt(std::max(n, 1)))
    s.rejected = "extended wings (" + std::to_string(wing / flux) + " of the Gaussian's flux beyond 1.5 FWHM)";
  return s;
}

// Median of the sharpest group, clipping, and the error of the median.
void combine(PsfEstimate& e) {
  std::vector<double> f;
  for (const auto& s : e.stars)
    if (s.rejected.empty()) f.push_back(s.fwhm_arcsec);
  if (f.empty()) return;
  const double fmin = *std::min_element(f.begin(), f.end());
  std::vector<double> sharp;
  for (double v : f)
    if (v <= 1.5 * fmin) sharp.push_back(v);
  const double ref = median_of(sharp);
  std::vector<double> dev;
  for (double v : f) dev.push_back(std::abs(v - ref));
  const double tol = std::max(3.0 * 1.4826 * median_of(dev), 0.1 * ref);
  std::vector<double> kept;
  double fit_var = 0.0;
  for (auto& s : e.stars) {
    if (!s.rejected.empty()) continue;
    if (std::abs(s.fwhm_arcsec - ref) > tol) {
      s.rejected = "FWHM far from the other stars' (an outlier)";
      continue;
    }
    s.used = true;
    kept.push_back(s.fwhm_arcsec);
    fit_var += s.fwhm_err_arcsec * s.fwhm_err_arcsec;
  }
  const double n = static_cast<double>(kept.size());
  e.stars_used = static_cast<int>(kept.size());
  // One compact source is not evidence of a PSF: a galaxy's nucleus alone
  // can pass every test above. At least two agreeing point sources.
  if (e.stars_used < kMinStars) return;
  e.fwhm_arcsec = median_of(kept);
  double err = std::sqrt(fit_var) / n;  // the fit errors of a mean of n
  if (kept.size() >= 3) {  // the scatter, which also holds real PSF variation over the field
    double m = 0, ss = 0;
    for (double v : kept) m += v / n;
    for (double v : kept) ss += (v - m) * (v - m);
    err = std::sqrt(std::numbers::pi / 2.0) * std::sqrt(ss / (n - 1)) / std::sqrt(n);
  }
  e.fwhm_err_arcsec = err;
  e.ok = true;
}

}  // namespace

PsfEstimate estimate_psf_from_stars(const Image& image, const std::vector<std::uint8_t>* exclude,
                                    const PsfEstimateOptions& o) {
  PsfEstimate e;
  const std::size_t n = image.size();
  const BackgroundSummary sky = estimate_background(image.data, exclude ? *exclude : std::vector<std::uint8_t>{});
  if (!(sky.rms > 0.0)) {
    e.reason = "the sky has no measurable noise";
    return e;
  }
  std::optional<double> sat = o.saturation_level;
  if (!sat)
    if (auto h = header_value(image.header, "SATURATE")) try {
        sat = std::stod(*h);
      } catch (...) {
      }
  std::vector<double> d(n);
  for (std::size_t i = 0; i < n; ++i)
    d[i] = (exclude && (*exclude)[i]) ? std::numeric_limits<double>::quiet_NaN() : image.data[i] - sky.level;
  const PixelOffsets offsets(image, image.wcs.pixel_to_world({0.5 * (image.nx - 1), 0.5 * (image.ny - 1)}));
  const Eigen::Matrix2d jac = offsets.jacobian();
  const double scale = offsets.pixel_scale_arcsec();

  std::vector<Candidate> cands = local_maxima(d, image.nx, image.ny, o.detect_sigma * sky.rms, exclude);
  if (static_cast<int>(cands.size()) > o.max_candidates) cands.resize(o.max_candidates);
  e.candidates = static_cast<int>(cands.size());
  const int cap = static_cast<int>(std::numbers::pi * o.max_fwhm_pixels * o.max_fwhm_pixels / 4.0);
  for (auto& c : cands) size_at_half_maximum(d, image.nx, image.ny, c, cap);
  for (std::size_t k = 0; k < cands.size(); ++k) {
    const Candidate& c = cands[k];
    const double guess_px = 2.0 * std::sqrt(c.half_area / std::numbers::pi);
    if (c.half_area < 2 || c.half_area > cap) continue;  // a hot pixel, or extended
    PsfStar s;
    s.centre = {static_cast<double>(c.x), static_cast<double>(c.y)};
    if ((sat && c.peak + sky.level >= *sat) || c.flat_top >= 3) s.rejected = "saturated";
    else if (!isolated(cands, k, 2.5 * guess_px + 2.0, o.neighbour_fraction))
      s.rejected = "has a neighbour (blended)";
    else s = examine(d, image.nx, image.ny, jac, scale, sky.rms, c, o);
    e.stars.push_back(s);
  }
  combine(e);
  if (!e.ok)
    e.reason = e.candidates == 0
                   ? "no source peaks " + std::to_string(static_cast<int>(o.detect_sigma)) + " sky rms above the sky"
                   : std::to_string(e.stars_used) + " of " + std::to_string(e.candidates) +
                         " candidate peaks are isolated, unsaturated point sources (at least " +
                         std::to_string(kMinStars) + " agreeing ones are needed)";
  return e;
}

}  // namespace fulcrum::photometry
