// Choosing the PSF size of an optical image: given, header beam, seeing
// card, or measured from its stars (see psf_size.hpp).
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/photometry/psf_size.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>

#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::photometry {

namespace {
std::string trim(const std::string& s) {
  const auto a = s.find_first_not_of(" \t");
  if (a == std::string::npos) return "";
  return s.substr(a, s.find_last_not_of(" \t") - a + 1);
}
std::string lower(std::string s) {
  for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return s;
}
}  // namespace

std::optional<HeaderEntry> header_entry(const std::string& h, const std::string& key) {
  for (std::size_t at = 0; at + 10 <= h.size(); at += 80) {
    const std::string rec = h.substr(at, 80);
    if (trim(rec.substr(0, 8)) != key || rec.compare(8, 2, "= ") != 0) continue;
    const std::string rest = rec.substr(10);
    HeaderEntry e;
    std::size_t slash;
    const auto q = rest.find('\'');
    if (q != std::string::npos && trim(rest.substr(0, q)).empty()) {
      std::size_t end = q + 1;  // a quoted string, '' is an embedded quote
      while (end < rest.size() && !(rest[end] == '\'' && (end + 1 >= rest.size() || rest[end + 1] != '\''))) 
        end += rest[end] == '\'' ? 2 : 1;
      e.value = trim(rest.substr(q + 1, end - q - 1));
      slash = rest.find('/', end);
    } else {
      slash = rest.find('/');
      e.value = trim(rest.substr(0, slash));
    }
    if (slash != std::string::npos) e.comment = trim(rest.substr(slash + 1));
    return e;
  }
  return std::nullopt;
}

std::optional<double> psf_from_header_card(const Image& image, double scale, std::string* detail) {
  std::string skipped;
  for (const char* key : {"PSF_FWHM", "SEEING", "FWHM"}) {
    const auto e = header_entry(image.header, key);
    if (!e) continue;
    double v = 0.0;
    try {
      v = std::stod(e->value);
    } catch (...) {
      skipped += std::string(skipped.empty() ? "" : "; ") + key + " is not a number";
      continue;
    }
    const std::string c = lower(e->comment);
    const bool pix = c.find("pix") != std::string::npos;
    const bool arcsec = c.find("arcsec") != std::string::npos || c.find('"') != std::string::npos;
    if (!pix && !arcsec && std::string(key) == "FWHM") {
      skipped += std::string(skipped.empty() ? "" : "; ") + "FWHM has no unit in its comment";
      continue;
    }
    const double arc = pix ? v * scale : v;
    if (!(arc >= 0.5 * scale) || !(arc <= 60.0)) {
      skipped += std::string(skipped.empty() ? "" : "; ") + key + " = " + e->value + " is implausible";
      continue;
    }
    if (detail)
      *detail = std::string(key) + " = " + e->value + (pix ? " pixels" : " arcsec") +
                (pix || arcsec ? "" : " (no unit given; arcsec assumed)");
    return arc;
  }
  if (detail) *detail = skipped;
  return std::nullopt;
}

PsfSize determine_psf_size(const Image& image, double given, const std::vector<std::uint8_t>* exclude,
                           const PsfEstimateOptions& o) {
  PsfSize p;
  if (given > 0.0) {
    p.known = true;
    p.fwhm_arcsec = given;
    p.source = "given";
    p.detail = "given by the user";
    return p;
  }
  if (image.beam && image.beam->bmaj_arcsec > 0.0) {
    p.known = true;
    p.fwhm_arcsec = image.beam->fwhm_arcsec();
    p.source = "header-beam";
    p.detail = "geometric mean of the header's BMAJ/BMIN";
    return p;
  }
  const PixelOffsets offsets(image, image.wcs.pixel_to_world({0.5 * (image.nx - 1), 0.5 * (image.ny - 1)}));
  std::string why_card;
  if (auto v = psf_from_header_card(image, offsets.pixel_scale_arcsec(), &why_card)) {
    p.known = true;
    p.fwhm_arcsec = *v;
    p.source = "header-card";
    p.detail = why_card;
    return p;
  }
  p.measured = estimate_psf_from_stars(image, exclude, o);
  if (p.measured->ok) {
    p.known = true;
    p.fwhm_arcsec = p.measured->fwhm_arcsec;
    p.fwhm_err_arcsec = p.measured->fwhm_err_arcsec;
    p.source = "measured";
    p.detail = "median FWHM of " + std::to_string(p.measured->stars_used) + " star(s) of " +
               std::to_string(p.measured->candidates) + " candidate peak(s): " + significant_text(p.fwhm_arcsec, 4) +
               " +- " + significant_text(p.fwhm_err_arcsec, 4) + " arcsec";
    return p;
  }
  p.detail = "no " + setting_ref("psf_fwhm_arcsec") + ", no BMAJ/BMIN" + std::string(why_card.empty() ? ", no seeing card" : " (" + why_card + ")") +
             ", and no usable star: " + p.measured->reason;
  return p;
}

nlohmann::json to_json(const PsfSize& p) {
  nlohmann::json j = {{"source", p.source}, {"detail", p.detail}};
  j["fwhm_arcsec"] = p.known ? nlohmann::json(p.fwhm_arcsec) : nlohmann::json(nullptr);
  j["fwhm_err_arcsec"] = p.fwhm_err_arcsec > 0 ? nlohmann::json(p.fwhm_err_arcsec) : nlohmann::json(nullptr);
  if (p.measured) {
    j["stars_used"] = p.measured->stars_used;
    j["candidates"] = p.measured->candidates;
    nlohmann::json stars = nlohmann::json::array();
    for (const auto& s : p.measured->stars)
      if (s.used)
        stars.push_back({{"x_fits", fits_pixel(s.centre.x)}, {"y_fits", fits_pixel(s.centre.y)},
                         {"fwhm_arcsec", s.fwhm_arcsec}, {"peak_snr", s.peak_snr}});
    j["stars"] = stars;
  }
  return j;
}

}  // namespace fulcrum::photometry
