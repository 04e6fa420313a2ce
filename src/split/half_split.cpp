// Exact leading/trailing halves with units and errors (see the header).
#include "fulcrum/split/half_split.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>
#include <sstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/split/clipped_error_map.hpp"

namespace fulcrum::split {

namespace {
std::string squeeze(const std::string& u) {
  std::string o;
  for (char c : u) {
    if (std::isspace(static_cast<unsigned char>(c)) || c == '.' || c == '*' || c == '(' || c == ')')
      continue;
    o += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  }
  return o;
}
}  // namespace

FluxScale flux_scale(const Image& map, double pixel_area) {
  FluxScale fs;
  const std::string u = squeeze(map.unit);
  // Jy/beam spelled as "jy/beam", "jy/bm", "jybeam-1", "jy/beam" with velocity after it.
  std::string rest;
  bool per_beam = false;
  for (const char* pat : {"jy/beam", "jy/bm", "jybeam-1", "jybeam^-1"}) {
    const auto pos = u.find(pat);
    if (pos == 0) {
      per_beam = true;
      rest = u.substr(std::string(pat).size());
      break;
    }
  }
  if (per_beam) {
    if (!map.beam || !(map.beam->bmaj_arcsec > 0.0) || !(map.beam->bmin_arcsec > 0.0))
      throw InputError(map.path, "BUNIT is '" + map.unit +
                                     "' (per beam) but the header has no BMAJ/BMIN to convert "
                                     "to flux");
    fs.per_beam = true;
    fs.factor = pixel_area / map.beam->solid_angle_arcsec2();
    if (rest.empty()) {
      fs.unit = "Jy";
    } else if (rest == "km/s" || rest == "kms-1" || rest == "kms^-1") {
      fs.unit = "Jy km/s";
    } else if (rest == "m/s" || rest == "ms-1" || rest == "ms^-1") {
      fs.factor *= 1e-3;  // velocities in km/s (DESIGN.md §2)
      fs.unit = "Jy km/s";
    } else {
      fs.unit = "Jy x (" + map.unit + " without /beam)";
    }
    return fs;
  }
  fs.factor = 1.0;
  fs.unit = (map.unit.empty() ? std::string("(no BUNIT)") : map.unit) + " x pixel";
  return fs;
}

SplitProblem prepare_split(const Image& map, const SplitOptions& opt) {
  SplitProblem pr;
  pr.reference = opt.centre;
  pr.map_path = map.path;
  if (!map.wcs.valid()) throw InputError(map.path, "the map has no celestial WCS");
  // The grid's geometry only: collect_pixels streams the pixels' offsets.
  const PixelOffsets offsets(map, opt.centre, PixelOffsets::Holds::geometry_only);
  pr.max_jacobian_variation = offsets.max_jacobian_variation();
  if (opt.aperture) {
    const ApertureSpec& a = *opt.aperture;
    if (!(a.radius_arcsec > 0.0)) throw InputError("", "the aperture radius must be positive");
    if (!(a.axis_ratio > 0.0 && a.axis_ratio <= 1.0))
      throw InputError("", "the aperture axis ratio must be in (0, 1]");
    SkyEllipse e;
    e.centre = a.centre ? offsets.frame().to_offset(*a.centre) : SkyOffset{};
    e.pa = a.pa_deg * degrees;
    e.a_arcsec = a.radius_arcsec;
    e.q = a.axis_ratio;
    pr.aperture = e;
  }
  NoiseSpec noise;
  noise.error_map = opt.error_map;
  noise.rms = opt.rms;
  if (!(opt.clip_snr >= 0.0)) throw InputError(map.path, "the clipping threshold must not be negative");
  if (!(opt.noise_correlation_beams > 0.0))
    throw InputError(map.path, "the noise correlation area must be positive (in beam areas)");
  // A clipped map: blank pixels where the noise is known were clipped (value
  // 0, but they could have been kept: they carry the clipped variance too).
  std::optional<Image> filled, clip_errors;
  if (opt.clip_snr > 0.0 && (opt.error_map || opt.rms > 0.0)) {
    if (opt.error_map && (opt.error_map->nx != map.nx || opt.error_map->ny != map.ny))
      throw InputError(opt.error_map->path, "is not on the grid of the map " + map.path);
    filled = map;
    for (std::size_t i = 0; i < map.size(); ++i) {
      const double sig = opt.error_map ? opt.error_map->data[i] : opt.rms;
      if (!std::isfinite(map.data[i]) && std::isfinite(sig) && sig > 0.0) filled->data[i] = 0.0;
    }
    const double pixel_area = std::abs(offsets.jacobian().determinant());
    const double eta = map.beam && map.beam->bmaj_arcsec > 0.0 && map.beam->bmin_arcsec > 0.0
                           ? std::max(1.0, opt.noise_correlation_beams * map.beam->pixels_per_beam(pixel_area))
                           : 1.0;
    clip_errors = clipped_error_map(*filled, opt.error_map, opt.rms, opt.clip_snr, opt.noise_correlation_beams, eta);
    noise.error_map = &*clip_errors;
    pr.clip_snr = opt.clip_snr;
  }
  pr.pixels = collect_pixels(filled ? *filled : map, offsets, pr.aperture, noise);
  pr.scale = flux_scale(map, pr.pixels.pixel_area_arcsec2());
  pr.beam = map.beam;
  if (map.beam && map.beam->bmaj_arcsec > 0.0 && map.beam->bmin_arcsec > 0.0)
    pr.pixels_per_beam = std::max(1.0, opt.noise_correlation_beams *
                                            map.beam->pixels_per_beam(pr.pixels.pixel_area_arcsec2()));
  if (opt.error_map)
    pr.noise_source = "error map " + opt.error_map->path;
  else if (opt.rms > 0.0)
    pr.noise_source = "rms " + significant_text(opt.rms, 6) + " " + map.unit;
  else
    pr.noise_source = "none";
  if (pr.clip_snr > 0.0) pr.noise_source += ", clip-aware (map clipped at " + significant_text(pr.clip_snr, 4) + " sigma)";
  return pr;
}

double asymmetry_error(double L, double T, double varL, double varT) {
  const double S = L + T;
  return 2.0 * std::sqrt(T * T * varL + L * L * varT) / (S * S);
}

SplitSummary summarise_halves(const SplitProblem& pr, const HalfSums& h, Angle tail,
                              SkyOffset c) {
  SplitSummary s;
  const double k = pr.scale.factor;
  s.leading_flux = k * h.leading;
  s.trailing_flux = k * h.trailing;
  s.total_flux = s.leading_flux + s.trailing_flux;
  s.flux_unit = pr.scale.unit;
  s.ratio = s.leading_flux / s.trailing_flux;
  s.asymmetry = (s.leading_flux - s.trailing_flux) / s.total_flux;
  const bool noise = pr.pixels.has_variance();
  if (noise) {
    const double vl = k * k * pr.pixels_per_beam * h.leading_var;
    const double vt = k * k * pr.pixels_per_beam * h.trailing_var;
    s.leading_err = std::sqrt(vl);
    s.trailing_err = std::sqrt(vt);
    s.asymmetry_err = asymmetry_error(s.leading_flux, s.trailing_flux, vl, vt);
  } else {
    s.leading_err = s.trailing_err = s.asymmetry_err = std::numeric_limits<double>::quiet_NaN();
  }
  s.tail_pa_deg = tail.wrap360().deg();
  s.leading_pa_deg = (tail + 180.0 * degrees).wrap360().deg();
  s.centre_offset = c;
  s.centre = OffsetFrame(pr.reference).to_world(c);
  s.n_pixels = pr.pixels.size();
  s.pixels_per_beam = pr.pixels_per_beam;
  s.noise_source = pr.noise_source;
  return s;
}

SplitSummary split_at(const SplitProblem& pr, Angle tail, SkyOffset c) {
  const ProjectionEngine eng(pr.pixels, tail);
  return summarise_halves(pr, eng.halves(c), tail, c);
}

void check_split_defined(const SplitProblem& pr, const SplitSummary& s, const std::string& path) {
  // Enough area to split: at least 4 pixels and 2 beams (correlation areas).
  const double need = std::max(kMinSplitPixels, kMinSplitBeams * pr.pixels_per_beam);
  if (static_cast<double>(s.n_pixels) < need)
    throw InputError(path, "the analysis region holds " + std::to_string(s.n_pixels) + " pixels (" +
                               significant_text(static_cast<double>(s.n_pixels) / pr.pixels_per_beam, 3) +
                               " beams): at least " + significant_text(std::ceil(need), 6) +
                               " pixels (4 pixels and 2 beams) are needed to split it");
  if (!(s.total_flux > 0.0))
    throw InputError(path, "the total flux in the analysis region is not positive (" +
                               significant_text(s.total_flux, 6) + " " + s.flux_unit +
                               "): no leading/trailing asymmetry can be measured");
  // A total that is the small difference of large positive and negative
  // pixels (or below its own noise) makes A = (L - T)/(L + T) undefined.
  double sum_abs = 0.0;
  for (double v : pr.pixels.value) sum_abs += std::abs(v);
  sum_abs *= std::abs(pr.scale.factor);
  if (s.total_flux < kMinTotalFraction * sum_abs)
    throw InputError(path, "the total flux in the analysis region is about zero (" +
                               significant_text(s.total_flux, 6) + " " + s.flux_unit + ", " +
                               significant_text(s.total_flux / sum_abs, 3) + " of the summed |flux|, below " +
                               significant_text(kMinTotalFraction, 3) + "): A = (L-T)/(L+T) is undefined");
  const double total_err = std::hypot(s.leading_err, s.trailing_err);
  if (std::isfinite(total_err) && total_err > 0.0 && s.total_flux < kMinTotalSnr * total_err)
    throw InputError(path, "the total flux in the analysis region is below " + significant_text(kMinTotalSnr, 3) +
                               " times its noise (" + significant_text(s.total_flux, 6) + " +- " +
                               significant_text(total_err, 3) + " " + s.flux_unit +
                               "): A = (L-T)/(L+T) is undefined");
}

SplitSummary split_halves(const Image& map, const SplitOptions& opt) {
  const SplitProblem pr = prepare_split(map, opt);
  if (!(std::abs(pr.scale.factor) > 0.0)) throw InputError(map.path, "zero flux scale");
  SplitSummary s = split_at(pr, opt.tail_pa_deg * degrees);
  check_split_defined(pr, s, map.path);
  return s;
}

namespace {
nlohmann::json num(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); }
}  // namespace

nlohmann::json to_json(const SplitSummary& s) {
  return {{"leading_flux", num(s.leading_flux)},
          {"trailing_flux", num(s.trailing_flux)},
          {"leading_flux_err", num(s.leading_err)},
          {"trailing_flux_err", num(s.trailing_err)},
          {"total_flux", num(s.total_flux)},
          {"flux_unit", s.flux_unit},
          {"ratio", num(s.ratio)},
          {"asymmetry", num(s.asymmetry)},
          {"asymmetry_err", num(s.asymmetry_err)},
          {"tail_pa_deg", s.tail_pa_deg},
          {"leading_pa_deg", s.leading_pa_deg},
          {"centre_ra_deg", s.centre.ra_deg},
          {"centre_dec_deg", s.centre.dec_deg},
          {"centre_offset_east_arcsec", s.centre_offset.east},
          {"centre_offset_north_arcsec", s.centre_offset.north},
          {"n_pixels", s.n_pixels},
          {"pixels_per_beam", s.pixels_per_beam},
          {"noise_source", s.noise_source}};
}

}  // namespace fulcrum::split
