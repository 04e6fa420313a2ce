// The celestial world coordinate system of an image, through wcslib.
//
// CelestialWcs holds the two celestial axes of a FITS header (whatever their
// position among the axes: a cube's spectral axis and a degenerate Stokes axis
// are dropped). Any linear part is accepted (CD, PC+CDELT, CROTA2) and any
// projection wcslib knows (SIN, TAN, ARC, ...). Nothing here assumes that
// north is up: callers ask for directions with sky/pixel_offsets.hpp.
//
// Pixel coordinates in this class are 0-based: the centre of the first pixel
// is (0, 0). FITS/people coordinates are these plus 1 (fits_pixel()).
// World coordinates are (RA, Dec) in degrees, ICRS/FK5 as the header says.
//
// wcslib's structures keep scratch space, so one CelestialWcs must not be used
// by two threads at once: copy it (copies are deep) or precompute offsets.
#pragma once

#include <cstddef>
#include <memory>
#include <string>
#include <vector>

struct wcsprm;

namespace fulcrum {

struct WorldCoord {
  double ra_deg = 0.0;
  double dec_deg = 0.0;
};

struct PixelCoord {
  double x = 0.0;  // 0-based
  double y = 0.0;  // 0-based
};

inline double fits_pixel(double zero_based) { return zero_based + 1.0; }
inline double zero_based_pixel(double fits) { return fits - 1.0; }

class CelestialWcs {
 public:
  CelestialWcs();  // empty: valid() is false
  // Parse the celestial part of a FITS header (80-character cards, no
  // separators, as from fits_hdr2str). `source` names the file for errors.
  // Throws InputError when the header has no usable celestial WCS.
  static CelestialWcs from_header(const std::string& header_cards, const std::string& source);
  // A simple WCS built from scratch: projection code ("TAN", "SIN"),
  // reference pixel (0-based), reference world position and a 2x2 CD matrix
  // in degrees per pixel (rows: RA, Dec axis; columns: x, y).
  static CelestialWcs from_cd(const std::string& projection, PixelCoord crpix0, WorldCoord crval,
                              const double cd[2][2]);

  CelestialWcs(const CelestialWcs& other);
  CelestialWcs& operator=(const CelestialWcs& other);
  CelestialWcs(CelestialWcs&&) noexcept;
  CelestialWcs& operator=(CelestialWcs&&) noexcept;
  ~CelestialWcs();

  bool valid() const { return wcs_ != nullptr; }
  // Throws InputError (naming `source`) if the pixel has no world position.
  WorldCoord pixel_to_world(PixelCoord p) const;
  // Throws InputError if the position is not on the projection.
  PixelCoord world_to_pixel(WorldCoord w) const;
  // Many pixels at once (faster than one by one); x, y 0-based, n points.
  void pixels_to_world(const double* x, const double* y, std::size_t n, WorldCoord* out) const;
  // The world positions of every pixel centre of an nx x ny grid (x
  // fastest, pixels_to_world of the whole grid), kept for later calls:
  // after keep_grid_world(nx, ny), kept_grid_world(nx, ny) returns them
  // (else null) to this WCS and every copy of it, made before or after (a
  // CelestialWcs never changes once made, so its copies share what is kept).
  // For code that places many maps on one grid (the calibration mocks);
  // thread-safe.
  void keep_grid_world(int nx, int ny) const;
  std::shared_ptr<const std::vector<WorldCoord>> kept_grid_world(int nx, int ny) const;
  // Header cards (80-char each, concatenated) describing this WCS for a 2-D
  // image, as written by wcslib's wcshdo. Used when writing outputs.
  std::string header_cards() const;
  // Projection code, e.g. "SIN".
  std::string projection() const;
  const std::string& source() const { return source_; }

 private:
  struct Deleter {
    void operator()(wcsprm* w) const;
  };
  std::unique_ptr<wcsprm, Deleter> wcs_;
  std::string source_;
  struct GridCache;
  std::shared_ptr<GridCache> grid_cache_;  // shared by copies (see keep_grid_world)
};

}  // namespace fulcrum
