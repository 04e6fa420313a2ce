// Light-weighted centroid in an iterated, symmetrically masked aperture (see
// centroid.hpp).
#include "fulcrum/photometry/centroid.hpp"

#include <cmath>

namespace fulcrum::photometry {

double centroid_aperture_radius(const PreparedImage& p, const CentroidOptions& o) {
  if (o.aperture_radius_arcsec > 0.0) return o.aperture_radius_arcsec;
  return 1.5 * p.radius_arcsec;
}

namespace {
struct Moments {
  double sw = 0, sx = 0, sy = 0;
  int count = 0;
};

Moments aperture_moments(const PreparedImage& p, const std::vector<double>& data, PixelCoord c,
                         double r_arcsec, bool symmetric, std::vector<double>* w) {
  Moments m;
  // Bounding box of the aperture in pixels: the circle maps to an ellipse
  // whose extent along x is R * |row of J^-1|.
  const Eigen::Matrix2d ji = p.jacobian.inverse();
  const double ex = r_arcsec * ji.row(0).norm(), ey = r_arcsec * ji.row(1).norm();
  const int x0 = std::max(0, static_cast<int>(std::floor(c.x - ex)));
  const int x1 = std::min(p.nx - 1, static_cast<int>(std::ceil(c.x + ex)));
  const int y0 = std::max(0, static_cast<int>(std::floor(c.y - ey)));
  const int y1 = std::min(p.ny - 1, static_cast<int>(std::ceil(c.y + ey)));
  if (w) w->assign(data.size(), 0.0);
  for (int y = y0; y <= y1; ++y)
    for (int x = x0; x <= x1; ++x) {
      const double f = data[x + p.nx * y];
      if (!std::isfinite(f)) continue;
      if (p.to_sky(x - c.x, y - c.y).norm() > r_arcsec) continue;
      if (symmetric) {
        const int mx = static_cast<int>(std::lround(2.0 * c.x - x));
        const int my = static_cast<int>(std::lround(2.0 * c.y - y));
        if (mx < 0 || my < 0 || mx >= p.nx || my >= p.ny || !std::isfinite(data[mx + p.nx * my]))
          continue;
      }
      m.sw += f;
      m.sx += f * x;
      m.sy += f * y;
      ++m.count;
      if (w) (*w)[x + p.nx * y] = f;
    }
  return m;
}
}  // namespace

PixelEstimate estimate_centroid(const PreparedImage& p, const std::vector<double>& data,
                                const CentroidOptions& o, std::vector<double>* weights_out) {
  if (!p.ok) return PixelEstimate::failure(p.reason);
  const double r = centroid_aperture_radius(p, o);
  PixelCoord c = p.guess;
  bool converged = false;
  int it = 0;
  for (; it < o.max_iterations; ++it) {
    const Moments m = aperture_moments(p, data, c, r, o.symmetric_masking, nullptr);
    if (!(m.sw > 0.0))
      return PixelEstimate::failure("no positive light inside the centroid aperture");
    const PixelCoord next{m.sx / m.sw, m.sy / m.sw};
    const double shift = std::hypot(next.x - c.x, next.y - c.y);
    c = next;
    if (c.x < 0 || c.y < 0 || c.x > p.nx - 1 || c.y > p.ny - 1)
      return PixelEstimate::failure("the centroid iteration left the image");
    if (shift <= o.tolerance_pixels) {
      converged = true;
      break;
    }
  }
  // The reported centre is the first moment of the final aperture's pixels.
  const Moments m = aperture_moments(p, data, c, r, o.symmetric_masking, weights_out);
  if (!(m.sw > 0.0)) return PixelEstimate::failure("no positive light inside the centroid aperture");
  const PixelCoord final_c{m.sx / m.sw, m.sy / m.sw};
  const double last_shift = std::hypot(final_c.x - c.x, final_c.y - c.y);
  if (!converged && last_shift > 0.05)
    return PixelEstimate::failure("the centroid iteration did not settle (last step " +
                                  std::to_string(last_shift) + " pixel)");
  PixelEstimate e;
  e.ok = true;
  e.centre = final_c;
  e.details = {{"aperture_radius_arcsec", r},
               {"aperture_pixels", m.count},
               {"aperture_flux", m.sw},
               {"iterations", it + 1},
               {"converged", converged}};
  return e;
}

}  // namespace fulcrum::photometry
