// Mock line maps made to look delivered: BLANK on floats, +inf and 1e38
// errors, scattered single pixels, long HISTORY (see delivered_style.hpp).
#include "fulcrum/synth/delivered_style.hpp"

#include <fitsio.h>

#include <cmath>
#include <limits>
#include <memory>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/core/random.hpp"

namespace fulcrum::synth {

namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr double kHuge = 1e38;

std::vector<std::string> invented_history(int n) {
  static const char* steps[] = {"flagged antenna-based outliers", "applied bandpass solution",
                                "applied flux scale from the calibrator", "self-calibrated phases",
                                "imaged with robust weighting", "cleaned to twice the rms",
                                "corrected for the primary beam", "regridded to the output grid",
                                "fitted one Gaussian per spectrum", "wrote moment maps"};
  std::vector<std::string> h;
  for (int i = 0; i < n; ++i)
    h.push_back("step " + std::to_string(i + 1) + ": " + steps[i % 10] + " (pass " + std::to_string(i / 10 + 1) + ")");
  return h;
}

struct Counts {
  int blank = 0, inf = 0, huge = 0;
};
nlohmann::json count(const Image& im, double blank) {
  Counts c;
  for (double v : im.data) {
    c.blank += v == blank;
    c.inf += std::isinf(v) && v > 0;
    c.huge += v == static_cast<double>(static_cast<float>(kHuge)) || v == kHuge;
  }
  return {{"blank", c.blank}, {"plus_inf", c.inf}, {"value_1e38", c.huge}};
}

// Whether no velocity pixel (finite or failed) is among the 8 neighbours.
bool lonely(const Image& vel, double blank, int x, int y) {
  for (int dy = -1; dy <= 1; ++dy)
    for (int dx = -1; dx <= 1; ++dx) {
      if ((dx == 0 && dy == 0) || !vel.contains(x + dx, y + dy)) continue;
      const double v = vel.at(x + dx, y + dy);
      if (v != blank) return false;
    }
  return true;
}

}  // namespace

DeliveredMaps make_delivered(const Image& vel, const Image& vel_err, const Image& mom0, const Image& mom0_err,
                             double vsys, const DeliveredSpec& s, std::uint64_t seed) {
  DeliveredMaps d{vel, vel_err, mom0, mom0_err, invented_history(s.history_cards), {}};
  const double b = s.blank_value;
  const int nx = vel.nx, ny = vel.ny;
  const double rmax = s.field_radius_fraction * 0.5 * std::min(nx, ny);
  std::vector<std::uint8_t> in_field(vel.size(), 0), galaxy(vel.size(), 0);
  for (int y = 0; y < ny; ++y)
    for (int x = 0; x < nx; ++x) {
      const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y;
      in_field[i] = std::hypot(x - 0.5 * (nx - 1), y - 0.5 * (ny - 1)) <= rmax;
      galaxy[i] = in_field[i] && std::isfinite(vel.data[i]);
      if (!galaxy[i]) d.velocity.data[i] = d.velocity_error.data[i] = b;
      if (!in_field[i]) d.intensity.data[i] = d.intensity_error.data[i] = b;
      for (Image* im : {&d.intensity, &d.intensity_error})
        if (!std::isfinite(im->data[i])) im->data[i] = b;
    }
  Random rng = Random::stream(seed, 0xde11e7edULL);
  int failed_inside = 0, failed_outside = 0, scattered = 0;
  for (std::size_t i = 0; i < vel.size(); ++i)
    if (galaxy[i] && rng.uniform() < s.failed_fit_fraction) {
      d.velocity_error.data[i] = (failed_inside++ % 2) ? kHuge : kInf;
    }
  // Outside the galaxy: failed fits, then lonely wild pixels.
  const int tries = 50 * (s.failed_fit_pixels_outside + s.scattered_pixels) + 100;
  for (int t = 0; t < tries && (failed_outside < s.failed_fit_pixels_outside || scattered < s.scattered_pixels); ++t) {
    const int x = static_cast<int>(rng.uniform() * nx), y = static_cast<int>(rng.uniform() * ny);
    const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y;
    if (!in_field[i] || galaxy[i] || d.velocity.data[i] != b || d.velocity_error.data[i] != b) continue;  // unused
    if (failed_outside < s.failed_fit_pixels_outside) {
      d.velocity_error.data[i] = (failed_outside % 2) ? kHuge : kInf;
      d.intensity_error.data[i] = kHuge;
      ++failed_outside;
    } else if (lonely(d.velocity, b, x, y)) {
      d.velocity.data[i] = vsys + rng.uniform(-1.0, 1.0) * s.scattered_velocity_range_kms;
      d.velocity_error.data[i] = rng.uniform(5.0, 30.0);
      ++scattered;
    }
  }
  d.summary = {{"blank_value", b},
               {"failed_fits_inside_galaxy", failed_inside},
               {"failed_fits_outside_galaxy", failed_outside},
               {"scattered_pixels", scattered},
               {"history_cards", s.history_cards},
               {"bitpix", -32},
               {"vel.fits", count(d.velocity, b)},
               {"vel_err.fits", count(d.velocity_error, b)},
               {"mom0.fits", count(d.intensity, b)},
               {"mom0_err.fits", count(d.intensity_error, b)}};
  return d;
}

void write_delivered_image(const std::string& path, const Image& im, double blank,
                           const std::vector<TextCard>& extra, const std::vector<std::string>& history) {
  AtomicFile out(path);
  int st = 0;
  fitsfile* f = nullptr;
  const std::string bang = "!" + out.temporary_path();
  if (fits_create_file(&f, bang.c_str(), &st)) throw InputError(path, "cannot create the FITS file");
  auto fail = [&](const char* what) {
    int s2 = 0;
    fits_close_file(f, &s2);
    throw InputError(path, std::string("cannot write ") + what + " (CFITSIO status " + std::to_string(st) + ")");
  };
  long naxes[2] = {im.nx, im.ny};
  if (fits_create_img(f, FLOAT_IMG, 2, naxes, &st)) fail("the image HDU");
  const std::string cards = im.wcs.header_cards();
  for (std::size_t p = 0; p + 80 <= cards.size(); p += 80) {
    const std::string rec = cards.substr(p, 80);
    if (rec.rfind("END     ", 0) == 0 || rec.rfind("WCSAXES", 0) == 0 || rec.find_first_not_of(' ') == std::string::npos)
      continue;
    fits_write_record(f, rec.c_str(), &st);
  }
  fits_update_key_dbl(f, "BLANK", blank, 6, "value of missing pixels", &st);
  if (!im.unit.empty()) fits_update_key_str(f, "BUNIT", const_cast<char*>(im.unit.c_str()), "", &st);
  if (im.beam) {
    fits_update_key_dbl(f, "BMAJ", im.beam->bmaj_arcsec / 3600.0, 12, "", &st);
    fits_update_key_dbl(f, "BMIN", im.beam->bmin_arcsec / 3600.0, 12, "", &st);
    fits_update_key_dbl(f, "BPA", im.beam->bpa_deg, 12, "", &st);
  }
  for (const auto& c : extra)
    if (c.numeric) fits_update_key_dbl(f, c.name.c_str(), std::stod(c.value), 12, c.comment.c_str(), &st);
    else fits_update_key_str(f, c.name.c_str(), const_cast<char*>(c.value.c_str()), c.comment.c_str(), &st);
  for (const auto& h : history) fits_write_history(f, h.c_str(), &st);
  if (st) fail("the header");
  std::vector<float> data(im.data.begin(), im.data.end());
  long first[2] = {1, 1};
  if (fits_write_pix(f, TFLOAT, first, static_cast<LONGLONG>(data.size()), data.data(), &st)) fail("the pixels");
  if (fits_close_file(f, &st)) throw InputError(path, "cannot finish writing the FITS file");
  out.commit();
}

}  // namespace fulcrum::synth
