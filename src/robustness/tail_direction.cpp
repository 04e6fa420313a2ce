// Tail PA from an image of the tail: light-weighted mean direction outside the
// disc aperture, with a bootstrap error (see the header).
#include "fulcrum/robustness/tail_direction.hpp"

#include <cmath>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/random.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::robustness {

TailDirectionSummary tail_direction(const Image& img, const TailDirectionOptions& o) {
  if (!img.wcs.valid()) throw InputError(img.path, "the tail image has no celestial WCS");
  if (o.error_map && (o.error_map->nx != img.nx || o.error_map->ny != img.ny))
    throw InputError(o.error_map->path, "the tail error map's grid differs from the tail image's");
  const PixelOffsets off(img, o.centre);
  std::vector<double> ue, un, w;
  for (std::size_t i = 0; i < img.size(); ++i) {
    const double f = img.data[i];
    if (!std::isfinite(f)) continue;
    const SkyOffset p{off.east()[i], off.north()[i]};
    if (o.disc.contains(p)) continue;
    double sigma = o.rms;
    if (o.error_map) sigma = o.error_map->data[i];
    const double thr = sigma > 0.0 && std::isfinite(sigma) ? o.detection_snr * sigma : 0.0;
    if (!(f > thr)) continue;
    const double r = p.norm();
    if (!(r > 0.0)) continue;
    ue.push_back(p.east / r);
    un.push_back(p.north / r);
    w.push_back(f);
  }
  if (w.empty())
    throw InputError(img.path, "no detected emission outside the disc aperture: cannot estimate the "
                               "tail direction (give the tail PA, tail_pa_deg, instead)");
  TailDirectionSummary t;
  t.n_pixels = w.size();
  auto direction = [&](auto&& index, std::size_t m, double* Ve, double* Vn, double* W) {
    double ve = 0.0, vn = 0.0, ww = 0.0;
    for (std::size_t j = 0; j < m; ++j) {
      const std::size_t i = index(j);
      ve += w[i] * ue[i];
      vn += w[i] * un[i];
      ww += w[i];
    }
    *Ve = ve;
    *Vn = vn;
    *W = ww;
  };
  double Ve, Vn, W;
  direction([](std::size_t j) { return j; }, w.size(), &Ve, &Vn, &W);
  t.tail_pa_deg = wrap_pa_deg(Angle::from_radians(std::atan2(Ve, Vn)).deg());
  t.resultant_fraction = std::hypot(Ve, Vn) / W;
  t.tail_flux_sum = W;
  double ppb = 1.0;
  if (img.beam && img.beam->bmaj_arcsec > 0.0)
    ppb = std::max(1.0, img.beam->pixels_per_beam(off.pixel_area_arcsec2()));
  const std::size_t m = std::max<std::size_t>(2, static_cast<std::size_t>(double(w.size()) / ppb));
  Random g(o.seed);
  double C = 0.0, S = 0.0;
  const double th0 = std::atan2(Ve, Vn);
  std::vector<std::size_t> idx(m);
  for (std::size_t b = 0; b < o.n_boot; ++b) {
    for (auto& k : idx) k = g.below(w.size());
    double be, bn, bw;
    direction([&](std::size_t j) { return idx[j]; }, m, &be, &bn, &bw);
    const double d = std::atan2(be, bn) - th0;
    C += std::cos(d);
    S += std::sin(d);
  }
  const double R = o.n_boot ? std::hypot(C, S) / double(o.n_boot) : 1.0;
  t.tail_pa_err_deg = Angle::from_radians(std::sqrt(std::max(0.0, -2.0 * std::log(std::max(R, 1e-300))))).deg();
  return t;
}

nlohmann::json to_json(const TailDirectionSummary& t) {
  return {{"tail_pa_deg", t.tail_pa_deg},
          {"tail_pa_err_deg", t.tail_pa_err_deg},
          {"n_pixels", t.n_pixels},
          {"resultant_fraction", t.resultant_fraction},
          {"tail_flux_sum", t.tail_flux_sum}};
}

}  // namespace fulcrum::robustness
