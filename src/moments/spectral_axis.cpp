// Spectral axis of a cube through wcslib (see spectral_axis.hpp for the
// conventions and their source). Velocities km/s, frequencies Hz.
#include "fulcrum/moments/spectral_axis.hpp"

#include <wcslib/wcs.h>
#include <wcslib/wcsfix.h>
#include <wcslib/wcserr.h>
#include <wcslib/wcshdr.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <memory>
#include <vector>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/io/header_card.hpp"

namespace fulcrum {

namespace {

constexpr double kLightKms = 299792.458;  // exact (SI definition of the metre)

struct WcsArray {
  wcsprm* all = nullptr;
  int nwcs = 0;
  ~WcsArray() {
    if (all) wcsvfree(&nwcs, &all);
  }
};

std::string trim(std::string s) {
  while (!s.empty() && s.back() == ' ') s.pop_back();
  std::size_t i = s.find_first_not_of(' ');
  return i == std::string::npos ? std::string() : s.substr(i);
}

std::string wcs_error(const wcsprm* w, int status) {
  if (w && w->err && w->err->msg[0]) return w->err->msg;
  return "wcslib status " + std::to_string(status);
}

bool needs_rest_frequency(const std::string& type4) {
  // Axes that are not velocities need a rest frequency (or wavelength) to
  // become one.
  return type4 == "FREQ" || type4 == "ENER" || type4 == "WAVN" || type4 == "WAVE" || type4 == "AWAV";
}

}  // namespace

const char* convention_name(VelocityConvention c) {
  return c == VelocityConvention::Radio ? "radio" : "optical";
}

double radio_velocity_kms(double freq_hz, double rest_hz) { return kLightKms * (1.0 - freq_hz / rest_hz); }
double optical_velocity_kms(double freq_hz, double rest_hz) { return kLightKms * (rest_hz / freq_hz - 1.0); }
double frequency_from_radio_kms(double v_kms, double rest_hz) { return rest_hz * (1.0 - v_kms / kLightKms); }
double frequency_from_optical_kms(double v_kms, double rest_hz) { return rest_hz / (1.0 + v_kms / kLightKms); }

namespace {

// A spectral keyword that is there but not a number (CDELT3 = 'ten km/s')
// is dropped by wcslib, which then takes its default (a channel width of
// 1 in the axis unit): refuse it instead.
void check_spectral_numbers(const std::string& header, int axis, const std::string& source) {
  const std::string n = std::to_string(axis);
  for (const std::string& key : {"CRVAL" + n, "CDELT" + n, "CRPIX" + n, "CD" + n + "_" + n, std::string("RESTFRQ"),
                                std::string("RESTFREQ"), std::string("RESTWAV")}) {
    const auto v = header_value(header, key);
    if (!v) continue;
    std::string text = trim(*v);
    std::replace(text.begin(), text.end(), 'D', 'E');  // FITS allows a D exponent
    char* end = nullptr;
    const double x = text.empty() ? 0.0 : std::strtod(text.c_str(), &end);
    if (text.empty() || end == nullptr || *end != '\0' || !std::isfinite(x))
      throw InputError(source, key + " = '" + trim(*v) + "' is not a finite number: the spectral axis cannot be read");
  }
}

}  // namespace

SpectralAxis spectral_axis_from_header(const std::string& header, int spectral_axis, int nz,
                                       const SpectralAxisOptions& options, const std::string& source) {
  if (nz < 1) throw InputError(source, "the cube has no channels");
  const std::string ctype = trim(header_value(header, "CTYPE" + std::to_string(spectral_axis)).value_or(""));
  if (ctype.empty())
    throw InputError(source, "no spectral axis: CTYPE" + std::to_string(spectral_axis) +
                                 " is missing (expected FREQ, VRAD, VOPT or VELO-xxx)");
  check_spectral_numbers(header, spectral_axis, source);
  const int nkeyrec = static_cast<int>(header.size() / 80);
  std::vector<char> buf(header.begin(), header.end());
  buf.push_back('\0');
  WcsArray arr;
  int nreject = 0;
  int status = wcspih(buf.data(), nkeyrec, WCSHDR_all, 0, &nreject, &arr.nwcs, &arr.all);
  if (status != 0 || arr.nwcs < 1) throw InputError(source, "cannot parse the WCS keywords of the cube header");
  wcsprm* w = &arr.all[0];
  for (int i = 0; i < arr.nwcs; ++i)
    if (arr.all[i].alt[0] == ' ' || arr.all[i].alt[0] == '\0') {
      w = &arr.all[i];
      break;
    }
  // wcsfix loses its fixes' informational messages (e.g. datfix's) without
  // freeing them when error reporting is on (LeakSanitizer finding): fix with
  // reporting off, then turn it on for the messages of the steps below.
  wcserr_enable(0);
  int stat[NWCSFIX];
  wcsfix(1, nullptr, w, stat);  // includes spcfix (AIPS VELO/FELO types) and unitfix
  wcserr_clear(&w->err);
  wcserr_enable(1);
  if (options.rest_frequency_hz) {
    if (!(*options.rest_frequency_hz > 0.0))
      throw InputError(source, "the rest frequency must be > 0 Hz");
    w->restfrq = *options.rest_frequency_hz;
    w->restwav = 0.0;
    w->flag = 0;
  }
  status = wcsset(w);
  if (status != 0) throw InputError(source, "invalid WCS in the cube header: " + wcs_error(w, status));
  const int spec = w->spec;  // 0-based, -1 if none
  if (spec < 0)
    throw InputError(source, "no spectral axis: CTYPE" + std::to_string(spectral_axis) + " = '" + ctype +
                                 "' is not a spectral type wcslib knows (FREQ, VRAD, VOPT, VELO-xxx, ...)");
  if (spec != spectral_axis - 1)
    throw InputError(source, "the spectral axis is FITS axis " + std::to_string(spec + 1) +
                                 ", expected axis " + std::to_string(spectral_axis));
  const std::string type4 = std::string(w->ctype[spec]).substr(0, 4);
  const bool have_rest = w->restfrq > 0.0 || w->restwav > 0.0;
  if (needs_rest_frequency(type4) && !have_rest)
    throw InputError(source, "the spectral axis is " + type4 +
                                 " but the header gives no rest frequency (RESTFRQ or RESTFREQ); give "
                                 "one with " + setting_ref("rest_frequency"));

  SpectralAxis out;
  out.axis_ctype = ctype;
  out.rest_frequency_hz = w->restfrq > 0.0 ? w->restfrq
                          : w->restwav > 0.0 ? 299792458.0 / w->restwav : 0.0;
  // The axis' own convention: optical for VOPT/ZOPT/FELO (spcfix made FELO
  // into VOPT-F2W), radio otherwise.
  VelocityConvention own = (type4 == "VOPT" || type4 == "ZOPT") ? VelocityConvention::Optical
                                                                : VelocityConvention::Radio;
  out.convention = options.convention.value_or(own);
  const std::string target = out.convention == VelocityConvention::Radio ? "VRAD" : "VOPT";
  if (type4 != target) {
    if (!have_rest)
      throw InputError(source, "converting the " + type4 + " axis to " +
                                   std::string(convention_name(out.convention)) +
                                   " velocity needs a rest frequency (RESTFRQ or RESTFREQ, or "
                                   "the rest_frequency setting)");
    char want[9];
    std::snprintf(want, sizeof want, "%s-???", target.c_str());
    int i = spec;
    status = wcssptr(w, &i, want);
    if (status != 0)
      throw InputError(source, "cannot convert the spectral axis " + type4 + " to " + target + ": " +
                                   wcs_error(w, status));
  }
  out.velocity_ctype = trim(w->ctype[spec]);

  // Evaluate channel centres and edges: pixel coordinate k + 1 (FITS) along
  // the spectral axis, the reference pixel on the others.
  const int naxis = w->naxis;
  const int n = 2 * nz + 1;  // edges and centres interleaved: k + 0.5, k + 1, k + 1.5, ...
  std::vector<double> pix(static_cast<std::size_t>(n) * naxis), img(pix.size()), world(pix.size());
  std::vector<double> phi(n), theta(n);
  std::vector<int> st(n);
  for (int j = 0; j < n; ++j)
    for (int a = 0; a < naxis; ++a)
      pix[static_cast<std::size_t>(j) * naxis + a] = a == spec ? 0.5 + 0.5 * j : w->crpix[a];
  status = wcsp2s(w, n, naxis, pix.data(), img.data(), phi.data(), theta.data(), world.data(), st.data());
  if (status != 0)
    throw InputError(source, "cannot evaluate the spectral axis: " + wcs_error(w, status));
  out.velocity_kms.resize(nz);
  out.width_kms.resize(nz);
  for (int k = 0; k < nz; ++k) {
    const double lo = world[static_cast<std::size_t>(2 * k) * naxis + spec] / 1000.0;
    const double mid = world[static_cast<std::size_t>(2 * k + 1) * naxis + spec] / 1000.0;
    const double hi = world[static_cast<std::size_t>(2 * k + 2) * naxis + spec] / 1000.0;
    if (!std::isfinite(mid) || !std::isfinite(lo) || !std::isfinite(hi))
      throw InputError(source, "channel " + std::to_string(k + 1) + " has no valid velocity");
    out.velocity_kms[k] = mid;
    out.width_kms[k] = std::abs(hi - lo);
  }
  if (nz > 1 && out.width_kms[0] == 0.0)
    throw InputError(source, "the spectral axis has zero channel width");
  return out;
}

SpectralAxis spectral_axis_of(const Cube& cube, const SpectralAxisOptions& options) {
  return spectral_axis_from_header(cube.header, cube.spectral_axis, cube.nz, options,
                                   cube.path.empty() ? std::string("cube") : cube.path);
}

std::string spectral_cards_as_axis3(const std::string& header, int n) {
  const std::string s = std::to_string(n);
  auto get = [&](const std::string& k) { return header_value(header, k); };
  std::string out;
  auto ctype = get("CTYPE" + s);
  if (ctype) out += header_card("CTYPE3", *ctype, true);
  if (auto u = get("CUNIT" + s)) out += header_card("CUNIT3", *u, true);
  double crpix = 1.0, crval = 0.0, cdelt = 1.0;
  if (auto v = get("CRPIX" + s)) crpix = std::atof(v->c_str());
  if (auto v = get("CRVAL" + s)) crval = std::atof(v->c_str());
  if (auto v = get("CD" + s + "_" + s)) {
    cdelt = std::atof(v->c_str());
  } else {
    if (auto d = get("CDELT" + s)) cdelt = std::atof(d->c_str());
    if (auto p = get("PC" + s + "_" + s)) cdelt *= std::atof(p->c_str());
    else if (auto p2 = get("PC00" + s + "00" + s)) cdelt *= std::atof(p2->c_str());
  }
  out += header_card("CRPIX3", header_number(crpix), false);
  out += header_card("CRVAL3", header_number(crval), false);
  out += header_card("CDELT3", header_number(cdelt), false);
  for (const char* k : {"RESTFRQ", "RESTFREQ", "RESTWAV"})
    if (auto v = get(k)) out += header_card(k, *v, false);
  for (const char* k : {"SPECSYS", "SSYSOBS", "SSYSSRC"})
    if (auto v = get(k)) out += header_card(k, *v, true);
  for (const char* k : {"VELREF", "VELOSYS", "ZSOURCE"})
    if (auto v = get(k)) out += header_card(k, *v, false);
  return out;
}

}  // namespace fulcrum
