// CelestialWcs: the celestial part of a FITS header through wcslib.
#include "fulcrum/io/wcs.hpp"

#include <wcslib/wcs.h>
#include <wcslib/wcserr.h>
#include <wcslib/wcsfix.h>
#include <wcslib/wcshdr.h>
#include <wcslib/wcsutil.h>
#include <wcslib/wcsmath.h>
#include <wcslib/sph.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <map>
#include <regex>
#include <mutex>
#include <string_view>
#include <vector>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/io/header_card.hpp"

namespace fulcrum {

void CelestialWcs::Deleter::operator()(wcsprm* w) const {
  if (w) {
    wcsfree(w);
    std::free(w);
  }
}

CelestialWcs::CelestialWcs() = default;
CelestialWcs::~CelestialWcs() = default;
CelestialWcs::CelestialWcs(CelestialWcs&&) noexcept = default;
CelestialWcs& CelestialWcs::operator=(CelestialWcs&&) noexcept = default;

namespace {

wcsprm* new_blank() {
  auto* w = static_cast<wcsprm*>(std::calloc(1, sizeof(wcsprm)));
  w->flag = -1;
  return w;
}

wcsprm* deep_copy(const wcsprm* src) {
  wcsprm* dst = new_blank();
  if (wcssub(1, src, nullptr, nullptr, dst) != 0) {
    wcsfree(dst);
    std::free(dst);
    throw InternalError("wcssub failed to copy a WCS");
  }
  wcsset(dst);
  return dst;
}

std::string wcs_message(const wcsprm* w, int status) {
  if (w && w->err && w->err->msg) return w->err->msg;
  if (status > 0 && status < 15 && wcs_errmsg[status]) return wcs_errmsg[status];
  return "wcslib error " + std::to_string(status);
}

bool is_celestial_ctype(const std::string& c) {
  static const char* prefixes[] = {"RA--", "DEC-", "GLON", "GLAT", "ELON", "ELAT", "SLON", "SLAT"};
  for (auto* p : prefixes)
    if (c.rfind(p, 0) == 0) return true;
  return false;
}

// A keyword card with a value: "= " in columns 9-10, and not COMMENT,
// HISTORY or a blank keyword, whose columns 9-80 are free text (FITS 4.0,
// section 4.4.2.4).
bool has_value_indicator(std::string_view card) {
  if (card.substr(8, 2) != "= ") return false;
  const std::string_view key = card.substr(0, 8);
  return key != "COMMENT " && key != "HISTORY " && key != "        ";
}

// Every quoted value must end inside its card (FITS standard 4.0, section
// 4.2.1). wcslib's header lexer overruns a buffer on an unterminated string
// (found by tests/fuzz/fuzz_fits_image.cpp; fortify abort in wcspih), so such
// headers are refused before wcspih sees them.
void check_string_values(const std::string& header, const std::string& source) {
  for (std::size_t pos = 0; pos + 80 <= header.size(); pos += 80) {
    const std::string_view card(header.data() + pos, 80);
    if (!has_value_indicator(card)) continue;
    std::size_t i = 10;
    while (i < 80 && card[i] == ' ') ++i;
    if (i >= 80 || card[i] != '\'') continue;
    bool closed = false;
    for (std::size_t j = i + 1; j < 80; ++j) {
      if (card[j] != '\'') continue;
      if (j + 1 < 80 && card[j + 1] == '\'') { ++j; continue; }
      closed = true;
      break;
    }
    if (!closed) {
      std::string key(card.substr(0, 8));
      while (!key.empty() && key.back() == ' ') key.pop_back();
      throw InputError(source, "header card " + std::to_string(pos / 80 + 1) + " (" + key +
                                   "): string value without a closing quote");
    }
  }
}

// After a value only spaces or a comment introduced by '/' may follow (FITS
// standard 4.0, section 4.1.2.3). wcslib's DSS keyword translation in wcspih
// dereferences a null pointer on such a card (e.g. "CNPIX2 = 2.5   x"; found
// by tests/fuzz/fuzz_fits_image.cpp), so these headers are refused with the
// card named instead. String values are checked by check_string_values.
void check_value_endings(const std::string& header, const std::string& source) {
  for (std::size_t pos = 0; pos + 80 <= header.size(); pos += 80) {
    const std::string_view card(header.data() + pos, 80);
    if (!has_value_indicator(card)) continue;
    std::size_t i = 10;
    while (i < 80 && card[i] == ' ') ++i;
    if (i >= 80 || card[i] == '/') continue;
    if (card[i] == '\'') {
      for (++i; i < 80; ++i) {
        if (card[i] != '\'') continue;
        if (i + 1 < 80 && card[i + 1] == '\'') { ++i; continue; }
        ++i;
        break;
      }
    } else if (card[i] == '(') {
      while (i < 80 && card[i] != ')') ++i;  // complex value "(re, im)"
      if (i < 80) ++i;
    } else {
      while (i < 80 && card[i] != ' ' && card[i] != '/') ++i;
    }
    while (i < 80 && card[i] == ' ') ++i;
    if (i < 80 && card[i] != '/') {
      std::string key(card.substr(0, 8));
      while (!key.empty() && key.back() == ' ') key.pop_back();
      throw InputError(source, "header card " + std::to_string(pos / 80 + 1) + " (" + key +
                                   "): text after the value that is not a '/' comment");
    }
  }
}

// Parse a FITS numeric value (Fortran 'D' exponents allowed); false if it is
// not a number.
bool parse_fits_number(std::string text, double& out) {
  for (char& ch : text)
    if (ch == 'D' || ch == 'd') ch = 'E';
  while (!text.empty() && text.back() == ' ') text.pop_back();
  if (text.empty()) return false;
  char* end = nullptr;
  out = std::strtod(text.c_str(), &end);
  return end && *end == '\0' && std::isfinite(out);
}

void check_celestial_keywords(const std::string& header, const std::string& source, int lng_axis,
                              int lat_axis) {
  for (int axis : {lng_axis, lat_axis}) {
    const std::string key = "CRVAL" + std::to_string(axis);
    auto v = header_value(header, key);
    if (!v)
      throw InputError(source, key + " is missing: the sky position of the reference pixel is "
                                     "unknown");
    double x = 0.0;
    if (!parse_fits_number(*v, x))
      throw InputError(source, key + " = '" + *v + "' is not a number");
    if (axis == lat_axis && std::abs(x) > 90.0)
      throw InputError(source, key + " = " + *v + " is not a latitude (|value| > 90 deg)");
  }
  const std::string a = std::to_string(lng_axis), b = std::to_string(lat_axis);
  bool has_cd = false;
  for (const auto& key : {"CD" + a + "_" + a, "CD" + a + "_" + b, "CD" + b + "_" + a, "CD" + b + "_" + b})
    has_cd = has_cd || header_value(header, key).has_value();
  const bool has_cdelt =
      header_value(header, "CDELT" + a).has_value() && header_value(header, "CDELT" + b).has_value();
  if (!has_cd && !has_cdelt)
    throw InputError(source, "no pixel scale: neither CDELT" + a + "/CDELT" + b + " nor a CD" + a +
                                 "_" + a + "... matrix is given");
}

}  // namespace

struct CelestialWcs::GridCache {
  std::mutex mutex;
  int nx = 0, ny = 0;
  std::shared_ptr<const std::vector<WorldCoord>> world;
};

CelestialWcs::CelestialWcs(const CelestialWcs& other) : source_(other.source_), grid_cache_(other.grid_cache_) {
  if (other.wcs_) wcs_.reset(deep_copy(other.wcs_.get()));
}

CelestialWcs& CelestialWcs::operator=(const CelestialWcs& other) {
  if (this != &other) {
    wcs_.reset(other.wcs_ ? deep_copy(other.wcs_.get()) : nullptr);
    source_ = other.source_;
    grid_cache_ = other.grid_cache_;
  }
  return *this;
}

namespace {

// A WCS keyword given twice: wcslib takes the last silently; say so.
void warn_duplicate_wcs_cards(const std::string& header, const std::string& source) {
  static const std::regex wcs_key(R"re((CTYPE|CRVAL|CRPIX|CDELT|CUNIT|CROTA)[0-9]+|(CD|PC|PV)[0-9]+_[0-9]+|LONPOLE|LATPOLE|RADESYS|RADECSYS|EQUINOX|EPOCH)re");
  std::map<std::string, int> count;
  for (std::size_t pos = 0; pos + 80 <= header.size(); pos += 80) {
    const std::string_view card(header.data() + pos, 80);
    if (!has_value_indicator(card)) continue;
    std::string key(card.substr(0, 8));
    key.erase(key.find_last_not_of(' ') + 1);
    if (std::regex_match(key, wcs_key)) ++count[key];
  }
  for (const auto& [key, n] : count)
    if (n > 1)
      warn(source + ": " + key + " appears " + std::to_string(n) +
           " times in the header; the last one is used: check which is right");
}

// The celestial frame must be equatorial ICRS or FK5 J2000 (the frame every
// position of fulcrum is in); others are refused, never read as RA/Dec.
void check_celestial_frame(const wcsprm& w, int lng, const std::string& source) {
  const std::string ctype(w.ctype[lng]);
  const std::string axis = "CTYPE" + std::to_string(lng + 1) + " = '" + ctype + "'";
  auto refuse = [&](const std::string& what) {
    throw InputError(source, what + ": fulcrum reads equatorial ICRS or FK5 J2000 (RA/Dec) maps only; "
                                    "reproject the map to RA/Dec first");
  };
  if (ctype.rfind("GLON", 0) == 0) refuse(axis + " is galactic longitude");
  if (ctype.rfind("ELON", 0) == 0) refuse(axis + " is ecliptic longitude");
  if (ctype.rfind("SLON", 0) == 0) refuse(axis + " is supergalactic longitude");
  std::string frame(w.radesys);
  frame.erase(frame.find_last_not_of(' ') + 1);
  const bool equinox_set = !undefined(w.equinox);
  if (frame == "FK4" || frame == "FK4-NO-E" || frame == "GAPPT")
    refuse("RADESYS = '" + frame + "'" + (equinox_set ? " (EQUINOX " + std::to_string(w.equinox).substr(0, 6) + ")" : ""));
  if (frame.empty() && equinox_set && w.equinox < 1984.0)
    refuse("EQUINOX = " + std::to_string(w.equinox).substr(0, 6) + " without RADESYS means FK4 B1950");
  if (frame == "FK5" && equinox_set && std::abs(w.equinox - 2000.0) > 1e-6)
    refuse("RADESYS = 'FK5' with EQUINOX = " + std::to_string(w.equinox).substr(0, 6) + " (not J2000)");
}

}  // namespace

CelestialWcs CelestialWcs::from_header(const std::string& header_cards, const std::string& source) {
  const int nkeyrec = static_cast<int>(header_cards.size() / 80);
  // wcspih must only see printable ASCII (see read_header in fits_image.cpp).
  for (char ch : header_cards)
    if (static_cast<unsigned char>(ch) < 0x20 || static_cast<unsigned char>(ch) > 0x7E)
      throw InputError(source, "the header holds bytes that are not printable ASCII");
  check_string_values(header_cards, source);
  check_value_endings(header_cards, source);
  std::vector<char> buf(header_cards.begin(), header_cards.end());
  buf.push_back('\0');
  int nreject = 0, nwcs = 0;
  wcsprm* all = nullptr;
  int status = wcspih(buf.data(), nkeyrec, WCSHDR_all, 0, &nreject, &nwcs, &all);
  if (status != 0 || nwcs < 1 || all == nullptr) {
    if (all) wcsvfree(&nwcs, &all);
    throw InputError(source, "cannot parse the WCS keywords of the header");
  }
  // Primary description (alternate ' ').
  wcsprm* prim = &all[0];
  for (int i = 0; i < nwcs; ++i)
    if (all[i].alt[0] == ' ' || all[i].alt[0] == '\0') { prim = &all[i]; break; }

  // Locate the celestial axes by CTYPE; they must be pixel axes 1 and 2.
  int lng = -1, lat = -1;
  for (int i = 0; i < prim->naxis; ++i) {
    std::string c(prim->ctype[i]);
    if (!is_celestial_ctype(c)) continue;
    if (c.rfind("RA--", 0) == 0 || c.rfind("GLON", 0) == 0 || c.rfind("ELON", 0) == 0 ||
        c.rfind("SLON", 0) == 0)
      lng = i;
    else
      lat = i;
  }
  if (lng < 0 || lat < 0) {
    wcsvfree(&nwcs, &all);
    throw InputError(source, "no celestial WCS: CTYPE1/CTYPE2 must name sky axes such as "
                             "RA---SIN and DEC--SIN");
  }
  if (!((lng == 0 && lat == 1) || (lng == 1 && lat == 0))) {
    wcsvfree(&nwcs, &all);
    throw InputError(source, "the celestial axes must be the first two axes of the array (found "
                             "them on axes " + std::to_string(lng + 1) + " and " +
                             std::to_string(lat + 1) + ")");
  }
  try {
    check_celestial_frame(*prim, lng, source);
  } catch (...) {
    wcsvfree(&nwcs, &all);
    throw;
  }
  warn_duplicate_wcs_cards(header_cards, source);
  // Keywords the standard lets default but whose defaults are never right for
  // a sky map: a missing CRVAL puts the map at RA = Dec = 0, a missing pixel
  // scale (no CDi_j, no CDELTi) makes each pixel one degree (Greisen &
  // Calabretta 2002, A&A 395, 1061, defaults of CRVALi and CDELTi).
  try {
    check_celestial_keywords(header_cards, source, lng + 1, lat + 1);
  } catch (...) {
    wcsvfree(&nwcs, &all);
    throw;
  }
  // A singular celestial CD matrix is an error, not something to repair.
  if (prim->altlin & 2) {
    double a = prim->cd[0 * prim->naxis + 0], b = prim->cd[0 * prim->naxis + 1];
    double c = prim->cd[1 * prim->naxis + 0], d = prim->cd[1 * prim->naxis + 1];
    if (std::abs(a * d - b * c) == 0.0) {
      wcsvfree(&nwcs, &all);
      throw InputError(source, "the CD matrix of the celestial axes is singular (its determinant "
                               "is zero)");
    }
  }
  int stat[NWCSFIX];
  // With wcslib's error reporting on (moments turn it on), wcsfix loses the
  // informational messages of its fixes (e.g. datfix's) without freeing them
  // (LeakSanitizer finding): keep reporting off while fixing.
  wcserr_enable(0);
  wcsfix(0, nullptr, prim, stat);
  wcserr_clear(&prim->err);

  wcsprm* sub = new_blank();
  int nsub = 2;
  int axes[2] = {1, 2};
  status = wcssub(1, prim, &nsub, axes, sub);
  wcsvfree(&nwcs, &all);
  if (status != 0 || nsub != 2) {
    wcsfree(sub);
    std::free(sub);
    throw InputError(source, "cannot extract the celestial axes of the WCS");
  }
  status = wcsset(sub);
  if (status != 0) {
    std::string msg = wcs_message(sub, status);
    wcsfree(sub);
    std::free(sub);
    throw InputError(source, "invalid celestial WCS: " + msg);
  }
  CelestialWcs out;
  out.wcs_.reset(sub);
  out.source_ = source;
  out.grid_cache_ = std::make_shared<GridCache>();
  return out;
}

CelestialWcs CelestialWcs::from_cd(const std::string& projection, PixelCoord crpix0,
                                   WorldCoord crval, const double cd[2][2]) {
  std::string h;
  h += header_card("NAXIS", "2", false);
  h += header_card("CTYPE1", "RA---" + projection, true);
  h += header_card("CTYPE2", "DEC--" + projection, true);
  h += header_card("CRPIX1", header_number(crpix0.x + 1.0), false);
  h += header_card("CRPIX2", header_number(crpix0.y + 1.0), false);
  h += header_card("CRVAL1", header_number(crval.ra_deg), false);
  h += header_card("CRVAL2", header_number(crval.dec_deg), false);
  h += header_card("CD1_1", header_number(cd[0][0]), false);
  h += header_card("CD1_2", header_number(cd[0][1]), false);
  h += header_card("CD2_1", header_number(cd[1][0]), false);
  h += header_card("CD2_2", header_number(cd[1][1]), false);
  h += header_card("RADESYS", "ICRS", true);
  return from_header(h, "built-in WCS");
}

WorldCoord CelestialWcs::pixel_to_world(PixelCoord p) const {
  if (!wcs_) throw InputError(source_, "image has no WCS");
  double pix[2] = {p.x + 1.0, p.y + 1.0};
  double img[2], phi, theta, world[2];
  int stat = 0;
  int status = wcsp2s(wcs_.get(), 1, 2, pix, img, &phi, &theta, world, &stat);
  if (status != 0)
    throw InputError(source_, "pixel (" + header_number(p.x + 1) + ", " + header_number(p.y + 1) +
                                  ") has no sky position: " + wcs_message(wcs_.get(), status));
  return {world[wcs_->lng], world[wcs_->lat]};
}

void CelestialWcs::pixels_to_world(const double* x, const double* y, std::size_t n,
                                   WorldCoord* out) const {
  if (!wcs_) throw InputError(source_, "image has no WCS");
  constexpr std::size_t kChunk = 4096;
  std::vector<double> pix(2 * kChunk), img(2 * kChunk), phi(kChunk), theta(kChunk), world(2 * kChunk);
  std::vector<int> stat(kChunk);
  for (std::size_t start = 0; start < n; start += kChunk) {
    const std::size_t m = std::min(kChunk, n - start);
    for (std::size_t i = 0; i < m; ++i) {
      pix[2 * i] = x[start + i] + 1.0;
      pix[2 * i + 1] = y[start + i] + 1.0;
    }
    int status = wcsp2s(wcs_.get(), static_cast<int>(m), 2, pix.data(), img.data(), phi.data(),
                        theta.data(), world.data(), stat.data());
    if (status != 0)
      throw InputError(source_, "some pixels have no sky position: " + wcs_message(wcs_.get(), status));
    for (std::size_t i = 0; i < m; ++i)
      out[start + i] = {world[2 * i + wcs_->lng], world[2 * i + wcs_->lat]};
  }
}

void CelestialWcs::keep_grid_world(int nx, int ny) const {
  if (!wcs_ || !grid_cache_ || nx <= 0 || ny <= 0) return;
  if (kept_grid_world(nx, ny)) return;
  const std::size_t n = static_cast<std::size_t>(nx) * static_cast<std::size_t>(ny);
  std::vector<double> xs(n), ys(n);
  for (int y = 0; y < ny; ++y)
    for (int x = 0; x < nx; ++x) {
      xs[static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y] = x;
      ys[static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y] = y;
    }
  auto world = std::make_shared<std::vector<WorldCoord>>(n);
  pixels_to_world(xs.data(), ys.data(), n, world->data());
  const std::lock_guard<std::mutex> lock(grid_cache_->mutex);
  grid_cache_->nx = nx;
  grid_cache_->ny = ny;
  grid_cache_->world = std::move(world);
}

std::shared_ptr<const std::vector<WorldCoord>> CelestialWcs::kept_grid_world(int nx, int ny) const {
  if (!grid_cache_) return nullptr;
  const std::lock_guard<std::mutex> lock(grid_cache_->mutex);
  if (grid_cache_->nx != nx || grid_cache_->ny != ny) return nullptr;
  return grid_cache_->world;
}

PixelCoord CelestialWcs::world_to_pixel(WorldCoord w) const {
  if (!wcs_) throw InputError(source_, "image has no WCS");
  double world[2];
  world[wcs_->lng] = w.ra_deg;
  world[wcs_->lat] = w.dec_deg;
  double img[2], phi, theta, pix[2];
  int stat = 0;
  int status = wcss2p(wcs_.get(), 1, 2, world, &phi, &theta, img, pix, &stat);
  if (status != 0)
    throw InputError(source_, "sky position (" + header_number(w.ra_deg) + ", " + header_number(w.dec_deg) +
                                  ") deg is not on the map's projection: " +
                                  wcs_message(wcs_.get(), status));
  return {pix[0] - 1.0, pix[1] - 1.0};
}

std::string CelestialWcs::header_cards() const {
  if (!wcs_) return {};
  int nkey = 0;
  char* hdr = nullptr;
  if (wcshdo(WCSHDO_safe, wcs_.get(), &nkey, &hdr) != 0 || hdr == nullptr)
    throw InternalError("wcshdo failed to write a WCS header");
  std::string out(hdr, static_cast<std::size_t>(nkey) * 80);
  wcsdealloc(hdr);
  return out;
}

std::string CelestialWcs::projection() const {
  if (!wcs_) return {};
  return std::string(wcs_->cel.prj.code);
}

std::optional<ZenithalChain> CelestialWcs::zenithal_chain() const {
  if (!wcs_ || wcs_->naxis != 2 || wcs_->lng < 0 || wcs_->lat < 0) return std::nullopt;
  const std::string code(wcs_->cel.prj.code);
  if (code != "TAN" && code != "SIN") return std::nullopt;
  if (wcs_->cel.offset || wcs_->lin.dispre || wcs_->lin.disseq) return std::nullopt;
  if (code == "SIN" && (wcs_->cel.prj.pv[1] != 0.0 || wcs_->cel.prj.pv[2] != 0.0)) return std::nullopt;
  if (!(wcs_->cel.prj.r0 > 0.0)) return std::nullopt;
  ZenithalChain c;
  c.sine = code == "SIN";
  c.r0 = wcs_->cel.prj.r0;
  for (int j = 0; j < 2; ++j) c.crpix[j] = wcs_->crpix[j] - 1.0;
  const int rows[2] = {wcs_->lng, wcs_->lat};
  // wcslib forms the CDELT x PC product only when PC is not the identity.
  if (!wcs_->lin.unity && !wcs_->lin.piximg) return std::nullopt;
  for (int i = 0; i < 2; ++i)
    for (int j = 0; j < 2; ++j)
      c.linear[i][j] = wcs_->lin.unity ? (j == rows[i] ? wcs_->lin.cdelt[j] : 0.0)
                                       : wcs_->lin.piximg[rows[i] * 2 + j];
  // The native basis through wcslib's own rotation of the sphere.
  const double phi[3] = {0.0, 90.0, 0.0}, theta[3] = {0.0, 0.0, 90.0};
  for (int k = 0; k < 3; ++k) {
    double lng = 0.0, lat = 0.0;
    if (sphx2s(wcs_->cel.euler, 1, 1, 1, 1, &phi[k], &theta[k], &lng, &lat) != 0) return std::nullopt;
    const double a = lng * D2R, d = lat * D2R;
    c.rotation[0][k] = std::cos(d) * std::cos(a);
    c.rotation[1][k] = std::cos(d) * std::sin(a);
    c.rotation[2][k] = std::sin(d);
  }
  return c;
}

}  // namespace fulcrum
