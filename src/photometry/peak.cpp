// Photometric peak: brightest point at the seeing, refined by the cap moment
// (see peak.hpp).
#include "fulcrum/photometry/peak.hpp"

#include <cmath>
#include <deque>

namespace fulcrum::photometry {

PixelEstimate estimate_peak(const PreparedImage& p, const std::vector<double>& data,
                            const PeakOptions& o, std::vector<double>* weights_out) {
  if (!p.ok) return PixelEstimate::failure(p.reason);
  const std::vector<double> s = smooth_to_fwhm(data, p.nx, p.ny, p.jacobian, p.psf_fwhm_arcsec);
  int ib = -1;
  for (int i = 0; i < p.nx * p.ny; ++i)
    if (p.galaxy[i] && std::isfinite(s[i]) && std::isfinite(data[i]) && (ib < 0 || s[i] > s[ib]))
      ib = i;
  if (ib < 0) return PixelEstimate::failure("no usable galaxy pixel for the peak");
  const double smax = s[ib];
  if (!(smax > 0.0)) return PixelEstimate::failure("the smoothed galaxy is not above the sky");
  const double t = o.cap_fraction * smax;
  std::vector<std::uint8_t> in(s.size(), 0);
  std::deque<int> q{ib};
  in[ib] = 1;
  double sw = 0, sx = 0, sy = 0;
  int count = 0;
  bool edge = false;
  while (!q.empty()) {
    const int i = q.front();
    q.pop_front();
    const int x = i % p.nx, y = i / p.nx;
    const double w = s[i] - t;
    sw += w;
    sx += w * x;
    sy += w * y;
    ++count;
    if (x == 0 || y == 0 || x == p.nx - 1 || y == p.ny - 1) edge = true;
    const int nb[4][2] = {{1, 0}, {-1, 0}, {0, 1}, {0, -1}};
    for (auto& d : nb) {
      const int xx = x + d[0], yy = y + d[1];
      if (xx < 0 || yy < 0 || xx >= p.nx || yy >= p.ny) continue;
      const int j = xx + p.nx * yy;
      if (in[j] || !std::isfinite(s[j]) || !(s[j] > t)) continue;
      in[j] = 1;
      q.push_back(j);
    }
  }
  if (edge) return PixelEstimate::failure("the peak's cap reaches the edge of the image");
  if (weights_out) {
    weights_out->assign(s.size(), 0.0);
    for (std::size_t i = 0; i < s.size(); ++i)
      if (in[i]) (*weights_out)[i] = s[i] - t;
  }
  PixelEstimate e;
  e.ok = true;
  e.centre = {sx / sw, sy / sw};
  e.details = {{"cap_pixels", count},
               {"cap_level", t},
               {"smoothed_peak", smax},
               {"brightest_pixel_fits", {fits_pixel(ib % p.nx), fits_pixel(ib / p.nx)}}};
  return e;
}

}  // namespace fulcrum::photometry
