// FITS images and cubes through CFITSIO, read as delivered: plain, gzip-
// compressed (.fits.gz) and tile-compressed (fpack) files alike, with the
// missing-value conventions found in real data products (missing_values.hpp).
#include "fulcrum/io/fits_image.hpp"

#include <fitsio.h>

#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <limits>
#include <memory>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/header_card.hpp"
#include "fulcrum/io/image_from_memory.hpp"
#include "fulcrum/io/missing_values.hpp"

namespace fulcrum {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::string cfitsio_message(int status) {
  char text[FLEN_STATUS] = {0};
  fits_get_errstatus(status, text);
  fits_clear_errmsg();
  return text;
}

struct FitsCloser {
  void operator()(fitsfile* f) const {
    int s = 0;
    if (f) fits_close_file(f, &s);
  }
};
using FitsPtr = std::unique_ptr<fitsfile, FitsCloser>;

std::size_t file_size(const std::string& path) {
  std::error_code ec;
  const auto n = std::filesystem::file_size(path, ec);
  return ec ? 0 : static_cast<std::size_t>(n);
}

// A gzip stream starts with the bytes 0x1f 0x8b (RFC 1952, section 2.3.1);
// CFITSIO unpacks such files in memory, whatever their name.
bool is_gzip_file(const std::string& path) {
  std::FILE* f = std::fopen(path.c_str(), "rb");
  if (!f) return false;
  unsigned char magic[2] = {0, 0};
  const std::size_t got = std::fread(magic, 1, 2, f);
  std::fclose(f);
  return got == 2 && magic[0] == 0x1f && magic[1] == 0x8b;
}

void check_path_readable(const std::string& path) {
  namespace fs = std::filesystem;
  std::error_code ec;
  if (!fs::exists(path, ec)) throw InputError(path, "no such file");
  if (fs::is_directory(path, ec)) throw InputError(path, "is a folder, not a FITS file");
  if (fs::file_size(path, ec) < 2880 && !is_gzip_file(path))
    throw InputError(path, "not a FITS file (shorter than one 2880-byte FITS block)");
}

// Move to the first HDU holding image data.
void goto_image_hdu(fitsfile* f, const std::string& name) {
  int status = 0, nhdu = 0;
  fits_get_num_hdus(f, &nhdu, &status);
  for (int h = 1; h <= std::max(nhdu, 1); ++h) {
    int type = 0;
    status = 0;
    fits_movabs_hdu(f, h, &type, &status);
    if (status) break;
    if (type != IMAGE_HDU) continue;
    int naxis = 0;
    fits_get_img_dim(f, &naxis, &status);
    if (!status && naxis > 0) return;
  }
  throw InputError(name, "holds no image data (no HDU with NAXIS > 0)");
}

void check_header_bytes(const std::string& header, const std::string& name);

// The header of the current HDU; for a tile-compressed image, the header of
// the image it holds (CFITSIO converts the compressed table's header).
std::string read_header(fitsfile* f, const std::string& name) {
  int status = 0, nkeys = 0;
  char* hdr = nullptr;
  int s0 = 0;
  const bool compressed = fits_is_compressed_image(f, &s0) && !s0;
  if (compressed ? fits_convert_hdr2str(f, 0, nullptr, 0, &hdr, &nkeys, &status)
                 : fits_hdr2str(f, 0, nullptr, 0, &hdr, &nkeys, &status))
    throw InputError(name, "cannot read the FITS header: " + cfitsio_message(status));
  std::string out(hdr, static_cast<std::size_t>(nkeys) * 80);
  int s2 = 0;
  fits_free_memory(hdr, &s2);
  check_header_bytes(out, name);
  return out;
}

void check_header_bytes(const std::string& out, const std::string& name) {
  // FITS headers are printable ASCII (FITS standard 4.0, section 4.1.1:
  // bytes 0x20-0x7E). Other bytes are refused here: wcslib's header parser
  // overflows a buffer on a card holding NUL bytes (found by
  // tests/fuzz/fuzz_fits_image.cpp; fortify abort in wcspih).
  for (std::size_t i = 0; i < out.size(); ++i) {
    const unsigned char ch = static_cast<unsigned char>(out[i]);
    if (ch < 0x20 || ch > 0x7E)
      throw InputError(name, "header card " + std::to_string(i / 80 + 1) +
                                 " holds a byte that is not printable ASCII (code " +
                                 std::to_string(ch) + "): damaged header");
  }
}

std::optional<Beam> read_beam(const std::string& header, const std::string& name) {
  auto bmaj = header_value(header, "BMAJ");
  auto bmin = header_value(header, "BMIN");
  if (bmaj.has_value() != bmin.has_value())
    warn(name + ": " + (bmaj ? "BMAJ without BMIN" : "BMIN without BMAJ") +
         " in the header: the beam is ignored");
  if (!bmaj || !bmin) return std::nullopt;
  Beam b;
  try {
    b.bmaj_arcsec = std::stod(*bmaj) * 3600.0;
    b.bmin_arcsec = std::stod(*bmin) * 3600.0;
    auto bpa = header_value(header, "BPA");
    b.bpa_deg = bpa ? std::stod(*bpa) : 0.0;
  } catch (const std::exception&) {
    throw InputError(name, "BMAJ/BMIN/BPA are not numbers");
  }
  if (!(b.bmaj_arcsec > 0) || !(b.bmin_arcsec > 0) || !std::isfinite(b.bmaj_arcsec) ||
      !std::isfinite(b.bmin_arcsec))
    throw InputError(name, "beam BMAJ/BMIN must be positive (degrees), got BMAJ=" + *bmaj +
                               " BMIN=" + *bmin);
  // Either axis (BMIN > BMAJ is swapped below; a huge BMIN once passed this
  // check and made moments run out of memory: process fuzzing, issue 17).
  if (b.bmaj_arcsec > 3600.0 || b.bmin_arcsec > 3600.0)
    throw InputError(name, "beam " + std::string(b.bmaj_arcsec > 3600.0 ? "BMAJ = " + *bmaj : "BMIN = " + *bmin) +
                               " deg is absurd for a galaxy map; FITS gives BMAJ/BMIN in degrees (was it arcsec?)");
  if (b.bmin_arcsec > b.bmaj_arcsec) std::swap(b.bmin_arcsec, b.bmaj_arcsec);
  return b;
}

// Angular distance in arcsec between two sky positions (haversine form).
double separation_arcsec(WorldCoord a, WorldCoord b) {
  constexpr double d2r = 3.14159265358979323846 / 180.0;
  const double s1 = std::sin(0.5 * (b.dec_deg - a.dec_deg) * d2r);
  const double s2 = std::sin(0.5 * (b.ra_deg - a.ra_deg) * d2r);
  const double h = s1 * s1 + std::cos(a.dec_deg * d2r) * std::cos(b.dec_deg * d2r) * s2 * s2;
  return 2.0 * std::asin(std::min(1.0, std::sqrt(h))) / d2r * 3600.0;
}

// A beam narrower than half a pixel is almost always a unit slip (radians or
// arcsec read as degrees the other way round); say so, but keep going: the
// values may be right for an unusual map.
void warn_if_beam_below_pixel(const std::optional<Beam>& beam, const CelestialWcs& wcs, int nx,
                              int ny, const std::string& name) {
  if (!beam || !wcs.valid()) return;
  try {
    const double cx = 0.5 * (nx - 1), cy = 0.5 * (ny - 1);
    const WorldCoord c = wcs.pixel_to_world({cx, cy});
    const double px = separation_arcsec(c, wcs.pixel_to_world({cx + 1.0, cy}));
    const double py = separation_arcsec(c, wcs.pixel_to_world({cx, cy + 1.0}));
    const double pixel = std::sqrt(px * py);
    if (std::isfinite(pixel) && beam->bmin_arcsec < 0.5 * pixel) {
      char text[256];
      std::snprintf(text, sizeof text,
                    "%s: beam BMIN = %.3g arcsec is smaller than half a pixel (%.3g arcsec): are "
                    "BMAJ/BMIN in degrees, as FITS requires?",
                    name.c_str(), beam->bmin_arcsec, pixel);
      warn(text);
    }
  } catch (const InputError&) {
    // No sky position at the map centre: nothing to compare with.
  }
}

struct RawArray {
  std::vector<long> naxes;
  std::vector<double> data;
  std::string header;
  MissingValueCounts missing;
  // The celestial WCS, parsed from the header before any pixel is read, so
  // that a bad WCS is refused without reading (or allocating) the data.
  std::optional<CelestialWcs> wcs;
};

// "100 x 80": the axis lengths as a person reads them.
std::string shape_text(const std::vector<long>& naxes) {
  std::string shape;
  for (long a : naxes) shape += (shape.empty() ? "" : " x ") + std::to_string(a);
  return shape;
}

// The number of pixels, checked before anything is allocated, without
// overflowing: a damaged header may announce axes of any length.
std::size_t checked_pixel_count(const std::vector<long>& naxes, const std::string& name,
                                const ReadOptions& opt) {
  const std::size_t limit = opt.max_pixels ? opt.max_pixels
                                           : std::numeric_limits<std::size_t>::max() / 16;
  const std::string shape = shape_text(naxes);
  for (long a : naxes)
    if (a <= 0) throw InputError(name, "an image axis has length " + std::to_string(a));
  std::size_t n = 1;
  for (long a : naxes) {
    if (static_cast<std::size_t>(a) > limit / n || a > std::numeric_limits<int>::max())
      throw InputError(name, "image of " + shape + " pixels is above the limit of " +
                                 std::to_string(limit) +
                                 " pixels (raise it with " + setting_ref("max_pixels") + " or FULCRUM_MAX_PIXELS)");
    n *= static_cast<std::size_t>(a);
  }
  return n;
}

// `available` is the size of the file or buffer in bytes (0: unknown).
RawArray read_array(fitsfile* f, const std::string& name, const ReadOptions& opt,
                    std::size_t available) {
  goto_image_hdu(f, name);
  int status = 0, bitpix = 0, naxis = 0;
  long naxes[9] = {0};
  if (fits_get_img_param(f, 9, &bitpix, &naxis, naxes, &status))
    throw InputError(name, "cannot read the image dimensions: " + cfitsio_message(status));
  if (naxis > 9) throw InputError(name, "NAXIS = " + std::to_string(naxis) + " is not supported");
  RawArray r;
  r.naxes.assign(naxes, naxes + naxis);
  const std::size_t n = checked_pixel_count(r.naxes, name, opt);
  const std::string shape = shape_text(r.naxes);
  r.header = read_header(f, name);
  if (auto bscale = header_value(r.header, "BSCALE")) {
    char* end = nullptr;
    const double v = std::strtod(bscale->c_str(), &end);
    if (end != bscale->c_str() && v == 0.0)
      throw InputError(name, "BSCALE = 0 would make every pixel equal to BZERO");
  }
  // A truncated file is refused before reading: the data unit must hold
  // every pixel the header announces.
  int s_comp = 0;
  if (fits_is_compressed_image(f, &s_comp) && !s_comp) available = 0;  // tiles: no fixed size
  if (available) {
    LONGLONG headstart = 0, datastart = 0, dataend = 0;
    int s2 = 0;
    fits_get_hduaddrll(f, &headstart, &datastart, &dataend, &s2);
    const std::size_t need =
        static_cast<std::size_t>(datastart) + n * static_cast<std::size_t>(std::abs(bitpix) / 8);
    if (!s2 && need > available)
      throw InputError(name, "truncated: the header announces " + shape + " pixels (" +
                                 std::to_string(need) + " bytes with the header) but the file "
                                 "holds " + std::to_string(available) + " bytes");
  }
  // The WCS before the pixels: a 14000 x 14000 image with a bad WCS is
  // refused from its header, not after reading 1.6 GB.
  if (r.naxes.size() >= 2) r.wcs = CelestialWcs::from_header(r.header, name);
  r.data.resize(n);
  std::vector<char> nulls(n, 0);
  std::vector<long> fpixel(static_cast<std::size_t>(naxis), 1);
  int anynul = 0;
  // Integer images: CFITSIO applies BLANK (nulls). Floating-point images are
  // read without CFITSIO's null check, which would turn +-inf into NaN
  // unseen: mark_missing_values counts NaN, infinities, BLANK and absurd
  // values apart.
  const int read_failed =
      bitpix > 0 ? fits_read_pixnull(f, TDOUBLE, fpixel.data(), static_cast<LONGLONG>(n),
                                     r.data.data(), nulls.data(), &anynul, &status)
                 : fits_read_pix(f, TDOUBLE, fpixel.data(), static_cast<LONGLONG>(n), nullptr,
                                 r.data.data(), &anynul, &status);
  if (read_failed)
    throw InputError(name, "cannot read the pixel data (truncated or damaged file?): " +
                               cfitsio_message(status));
  if (anynul)
    for (std::size_t i = 0; i < n; ++i)
      if (nulls[i]) r.data[i] = kNaN;
  r.missing = mark_missing_values(r.data, r.header, bitpix);
  return r;
}

FitsPtr open_fits(const std::string& path) {
  check_path_readable(path);
  fitsfile* f = nullptr;
  int status = 0;
  if (fits_open_file(&f, path.c_str(), READONLY, &status)) {
    if (f) { int s = 0; fits_close_file(f, &s); }
    throw InputError(path, "cannot open as FITS: " + cfitsio_message(status));
  }
  return FitsPtr(f);
}

std::string trim(std::string s) {
  while (!s.empty() && (s.back() == ' ' || s.back() == '\0')) s.pop_back();
  std::size_t i = 0;
  while (i < s.size() && s[i] == ' ') ++i;
  return s.substr(i);
}

Image image_from_raw(RawArray&& r, const std::string& name) {
  if (r.naxes.size() < 2)
    throw InputError(name, "NAXIS = " + std::to_string(r.naxes.size()) +
                               ": a sky image needs two axes");
  for (std::size_t k = 2; k < r.naxes.size(); ++k)
    if (r.naxes[k] != 1)
      throw InputError(name, "NAXIS = " + std::to_string(r.naxes.size()) + " with NAXIS" +
                                 std::to_string(k + 1) + " = " + std::to_string(r.naxes[k]) +
                                 ": expected a 2-D map (is this a cube? use `fulcrum moments`)");
  Image img;
  img.nx = static_cast<int>(r.naxes[0]);
  img.ny = static_cast<int>(r.naxes[1]);
  img.data = std::move(r.data);
  img.header = std::move(r.header);
  img.path = name;
  img.wcs = r.wcs ? std::move(*r.wcs) : CelestialWcs::from_header(img.header, name);
  img.beam = read_beam(img.header, name);
  img.unit = trim(header_value(img.header, "BUNIT").value_or(""));
  warn_if_beam_below_pixel(img.beam, img.wcs, img.nx, img.ny, name);
  return img;
}

std::size_t g_default_max_pixels = 0;  // 0: not yet decided

}  // namespace

std::size_t default_max_pixels() {
  if (g_default_max_pixels) return g_default_max_pixels;
  if (const char* env = std::getenv("FULCRUM_MAX_PIXELS")) {
    char* end = nullptr;
    const unsigned long long v = std::strtoull(env, &end, 10);
    if (end != env && *end == '\0' && v > 0) return static_cast<std::size_t>(v);
  }
  return kDefaultMaxPixels;
}

void set_default_max_pixels(std::size_t n) { g_default_max_pixels = n; }

std::optional<std::string> header_value(const std::string& header, const std::string& key) {
  for (std::size_t pos = 0; pos + 80 <= header.size(); pos += 80) {
    std::string_view card(header.data() + pos, 80);
    std::string_view k = card.substr(0, 8);
    while (!k.empty() && k.back() == ' ') k.remove_suffix(1);
    if (k != key || card.substr(8, 2) != "= ") continue;
    std::string_view v = card.substr(10);
    std::size_t i = 0;
    while (i < v.size() && v[i] == ' ') ++i;
    if (i < v.size() && v[i] == '\'') {
      std::string out;
      for (std::size_t j = i + 1; j < v.size(); ++j) {
        if (v[j] == '\'') {
          if (j + 1 < v.size() && v[j + 1] == '\'') { out += '\''; ++j; continue; }
          break;
        }
        out += v[j];
      }
      while (!out.empty() && out.back() == ' ') out.pop_back();
      return out;
    }
    std::size_t slash = v.find('/', i);
    std::string out(v.substr(i, slash == std::string_view::npos ? std::string_view::npos : slash - i));
    while (!out.empty() && out.back() == ' ') out.pop_back();
    return out;
  }
  return std::nullopt;
}

Image read_image_counted(const std::string& path, MissingValueCounts& counts,
                         const ReadOptions& options) {
  auto f = open_fits(path);
  // A gzip file's size says nothing about the unpacked data unit.
  RawArray r = read_array(f.get(), path, options, is_gzip_file(path) ? 0 : file_size(path));
  counts = r.missing;
  warn_missing_values(counts, path);
  return image_from_raw(std::move(r), path);
}

std::vector<long> fits_image_axes(const std::string& path) {
  FitsPtr fp = open_fits(path);
  goto_image_hdu(fp.get(), path);
  int status = 0, naxis = 0;
  long naxes[9] = {0};
  if (fits_get_img_dim(fp.get(), &naxis, &status) || naxis < 1 || naxis > 9 ||
      fits_get_img_size(fp.get(), naxis, naxes, &status))
    throw InputError(path, "cannot read the image axes: " + cfitsio_message(status));
  return std::vector<long>(naxes, naxes + naxis);
}

Image read_image(const std::string& path, const ReadOptions& options) {
  MissingValueCounts counts;
  return read_image_counted(path, counts, options);
}

Image read_image_from_memory(const void* bytes, std::size_t size, const std::string& name,
                             const ReadOptions& options) {
  if (size < 2880) throw InputError(name, "not a FITS file (shorter than one 2880-byte FITS block)");
  // CFITSIO may reallocate memory files opened read-write; we open read-only
  // on a private copy so the caller's buffer is never touched. The copy is
  // padded with zeros to whole 2880-byte blocks: CFITSIO's memory driver
  // reads whole blocks and reads past the end of a buffer that ends inside
  // one (found by tests/fuzz/fuzz_fits_image.cpp; ASan heap-buffer-overflow in
  // mem_read). Truncated data are still refused, by the size check in
  // read_array against the original size.
  std::vector<char> copy(static_cast<const char*>(bytes), static_cast<const char*>(bytes) + size);
  copy.resize((size + 2879) / 2880 * 2880, '\0');
  void* mem = copy.data();
  std::size_t memsize = copy.size();
  fitsfile* f = nullptr;
  int status = 0;
  if (fits_open_memfile(&f, name.c_str(), READONLY, &mem, &memsize, 0, nullptr, &status)) {
    if (f) { int s = 0; fits_close_file(f, &s); }
    throw InputError(name, "cannot open as FITS: " + cfitsio_message(status));
  }
  FitsPtr fp(f);
  return image_from_raw(read_array(fp.get(), name, options, size), name);
}

namespace {

// The keywords that describe a FITS data array rather than what it shows.
bool is_structure_keyword(std::string_view card) {
  std::string_view key = card.substr(0, 8);
  while (!key.empty() && key.back() == ' ') key.remove_suffix(1);
  if (key.rfind("NAXIS", 0) == 0) return true;
  for (const char* k : {"SIMPLE", "XTENSION", "BITPIX", "EXTEND", "PCOUNT", "GCOUNT"})
    if (key == k) return true;
  return false;
}

// Header cards as given from memory: whole 80-character cards of printable
// ASCII, cut at END; each NAXISn card present must agree with the array.
// Returned as the header of a float64 FITS image of these axes (SIMPLE,
// BITPIX, NAXIS, NAXISn first, as CFITSIO gives a file's header), so that
// what is checked and parsed is what a file with this array would hold.
std::string checked_memory_header(const std::string& cards, const std::vector<long>& axes,
                                  const std::string& name) {
  if (cards.size() % 80 != 0)
    throw InputError(name, "the header is " + std::to_string(cards.size()) +
                               " characters long: FITS header cards are 80 characters each");
  std::string header;
  for (std::size_t pos = 0; pos < cards.size(); pos += 80) {
    if (cards.compare(pos, 8, "END     ") == 0) break;
    header.append(cards, pos, 80);
  }
  check_header_bytes(header, name);
  for (std::size_t k = 0; k < axes.size(); ++k) {
    const std::string key = "NAXIS" + std::to_string(k + 1);
    const auto v = header_value(header, key);
    if (!v) continue;
    char* end = nullptr;
    const long given = std::strtol(v->c_str(), &end, 10);
    if (end == v->c_str() || *end != '\0' || given != axes[k])
      throw InputError(name, "the header says " + key + " = " + *v + " but the array is " +
                                 shape_text(axes) + " pixels (FITS order, x first)");
  }
  std::string out = header_card("SIMPLE", "T", false) + header_card("BITPIX", "-64", false) +
                    header_card("NAXIS", std::to_string(axes.size()), false);
  for (std::size_t k = 0; k < axes.size(); ++k)
    out += header_card("NAXIS" + std::to_string(k + 1), std::to_string(axes[k]), false);
  for (std::size_t pos = 0; pos + 80 <= header.size(); pos += 80)
    if (!is_structure_keyword(std::string_view(header).substr(pos, 80))) out.append(header, pos, 80);
  return out;
}

}  // namespace

Image image_from_memory(std::vector<double> pixels, const std::vector<long>& axes,
                        const std::string& header_cards, const std::string& name,
                        const ReadOptions& options) {
  const std::size_t n = checked_pixel_count(axes, name, options);
  FULCRUM_CHECK(pixels.size() == n, n, pixels.size());
  RawArray r;
  r.naxes = axes;
  r.header = checked_memory_header(header_cards, axes, name);
  r.data = std::move(pixels);
  r.missing = mark_missing_values(r.data, r.header, -64);  // values as a float64 file holds them
  warn_missing_values(r.missing, name);
  return image_from_raw(std::move(r), name);
}

Cube read_cube(const std::string& path, const ReadOptions& options) {
  auto f = open_fits(path);
  RawArray r = read_array(f.get(), path, options, is_gzip_file(path) ? 0 : file_size(path));
  warn_missing_values(r.missing, path);
  const auto nax = r.naxes.size();
  if (nax < 3 || nax > 4)
    throw InputError(path, "NAXIS = " + std::to_string(nax) + ": a cube needs 3 axes (x, y, "
                                                              "spectral), or 4 with a Stokes axis");
  int spec = 3;
  if (nax == 4) {
    auto c3 = header_value(r.header, "CTYPE3").value_or("");
    auto c4 = header_value(r.header, "CTYPE4").value_or("");
    if (c3.rfind("STOKES", 0) == 0 && r.naxes[2] == 1) spec = 4;
    else if (r.naxes[3] != 1)
      throw InputError(path, "4-D cube whose 4th axis (" + c4 + ") has length " +
                                 std::to_string(r.naxes[3]) + ": only a single Stokes plane is "
                                                              "supported");
  }
  Cube c;
  c.nx = static_cast<int>(r.naxes[0]);
  c.ny = static_cast<int>(r.naxes[1]);
  c.nz = static_cast<int>(r.naxes[static_cast<std::size_t>(spec - 1)]);
  c.spectral_axis = spec;
  c.data = std::move(r.data);
  c.header = std::move(r.header);
  c.path = path;
  c.wcs = r.wcs ? std::move(*r.wcs) : CelestialWcs::from_header(c.header, path);
  c.beam = read_beam(c.header, path);
  c.unit = trim(header_value(c.header, "BUNIT").value_or(""));
  return c;
}

namespace {

void write_card_strings(fitsfile* f, const std::string& cards, const std::string& name,
                        bool skip_wcsaxes) {
  int status = 0;
  for (std::size_t pos = 0; pos + 80 <= cards.size(); pos += 80) {
    std::string rec = cards.substr(pos, 80);
    if (rec.rfind("END     ", 0) == 0) continue;
    if (skip_wcsaxes && rec.rfind("WCSAXES", 0) == 0) continue;
    if (rec.find_first_not_of(' ') == std::string::npos) continue;
    fits_write_record(f, rec.c_str(), &status);
  }
  if (status) throw InputError(name, "cannot write WCS keywords: " + cfitsio_message(status));
}

void write_common(fitsfile* f, const std::optional<Beam>& beam, const std::string& unit,
                  const std::vector<HeaderCard>& extra, const std::string& name) {
  int status = 0;
  if (!unit.empty())
    fits_update_key_str(f, "BUNIT", const_cast<char*>(unit.c_str()), "brightness unit", &status);
  if (beam) {
    double bmaj = beam->bmaj_arcsec / 3600.0, bmin = beam->bmin_arcsec / 3600.0,
           bpa = beam->bpa_deg;
    fits_update_key_dbl(f, "BMAJ", bmaj, 15, "[deg] beam major axis FWHM", &status);
    fits_update_key_dbl(f, "BMIN", bmin, 15, "[deg] beam minor axis FWHM", &status);
    fits_update_key_dbl(f, "BPA", bpa, 15, "[deg] beam position angle", &status);
  }
  for (const auto& c : extra) {
    if (c.numeric) {
      double v = std::stod(c.value);
      fits_update_key_dbl(f, c.name.c_str(), v, 15, c.comment.c_str(), &status);
    } else {
      fits_update_key_str(f, c.name.c_str(), const_cast<char*>(c.value.c_str()),
                          c.comment.c_str(), &status);
    }
  }
  if (status) throw InputError(name, "cannot write header keywords: " + cfitsio_message(status));
}

// CFITSIO's message of a failed write, with the system's reason (errno, set
// by the failed write CFITSIO made: ENOSPC, EROFS, EFBIG) when there is one.
// errno is cleared before each writing call that uses this.
std::string write_failure(int status) {
  const int e = errno;
  std::string m = cfitsio_message(status);
  if (e != 0) m += ": " + std::string(std::strerror(e));
  return m;
}

FitsPtr create_fits(const std::string& tmp, const std::string& name) {
  fitsfile* f = nullptr;
  int status = 0;
  std::string bang = "!" + tmp;
  errno = 0;
  if (fits_create_file(&f, bang.c_str(), &status))
    throw InputError(name, "cannot create FITS file: " + write_failure(status));
  return FitsPtr(f);
}

void close_checked(FitsPtr& fp, const std::string& name) {
  int status = 0;
  errno = 0;
  fits_close_file(fp.release(), &status);
  if (status) throw InputError(name, "cannot finish writing FITS file: " + write_failure(status));
}

}  // namespace

void write_image(const std::string& path, const Image& image, const std::vector<HeaderCard>& extra) {
  FULCRUM_CHECK(image.data.size() == image.size(), image.size(), image.data.size());
  AtomicFile out(path);
  {
    auto f = create_fits(out.temporary_path(), path);
    int status = 0;
    long naxes[2] = {image.nx, image.ny};
    fits_create_img(f.get(), DOUBLE_IMG, 2, naxes, &status);
    if (status) throw InputError(path, "cannot create image HDU: " + cfitsio_message(status));
    write_card_strings(f.get(), image.wcs.header_cards(), path, true);
    write_common(f.get(), image.beam, image.unit, extra, path);
    long fpixel[2] = {1, 1};
    errno = 0;
    fits_write_pix(f.get(), TDOUBLE, fpixel, static_cast<LONGLONG>(image.size()),
                   const_cast<double*>(image.data.data()), &status);
    if (status) throw InputError(path, "cannot write pixel data: " + write_failure(status));
    close_checked(f, path);
  }
  out.commit();
}

void write_cube(const std::string& path, const Cube& cube, const std::string& spectral_cards,
                const std::vector<HeaderCard>& extra) {
  FULCRUM_CHECK(cube.data.size() == cube.plane_size() * static_cast<std::size_t>(cube.nz),
                cube.plane_size() * cube.nz, cube.data.size());
  AtomicFile out(path);
  {
    auto f = create_fits(out.temporary_path(), path);
    int status = 0;
    long naxes[3] = {cube.nx, cube.ny, cube.nz};
    fits_create_img(f.get(), DOUBLE_IMG, 3, naxes, &status);
    if (status) throw InputError(path, "cannot create image HDU: " + cfitsio_message(status));
    write_card_strings(f.get(), cube.wcs.header_cards(), path, true);
    write_card_strings(f.get(), spectral_cards, path, true);
    write_common(f.get(), cube.beam, cube.unit, extra, path);
    long fpixel[3] = {1, 1, 1};
    errno = 0;
    fits_write_pix(f.get(), TDOUBLE, fpixel, static_cast<LONGLONG>(cube.data.size()),
                   const_cast<double*>(cube.data.data()), &status);
    if (status) throw InputError(path, "cannot write pixel data: " + write_failure(status));
    close_checked(f, path);
  }
  out.commit();
}

}  // namespace fulcrum
