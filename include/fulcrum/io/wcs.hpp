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
#include <optional>
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

// The pixel-to-sky chain of a zenithal TAN or SIN projection (no
// distortion, no SIN obliqueness, no fiducial offset) as plain numbers, for
// code that maps whole grids without wcslib's per-pixel trigonometry
// (sky/zenithal_offsets.hpp). Calabretta & Greisen 2002 (A&A 395, 1077),
// the zenithal projections (x = R sin phi, y = -R cos phi; TAN R = r0 cot
// theta, SIN R = r0 cos theta; recalled from memory): intermediate
// coordinates (x, y) = linear (pixel - crpix) in degrees; native direction
// for TAN (-y, x, r0) / |.|, for SIN (-y / r0, x / r0, sqrt(1 - (x^2 + y^2)
// / r0^2)) in the native basis below; celestial unit vector = rotation x
// native vector.
struct ZenithalChain {
  bool sine = false;           // SIN; else TAN
  double crpix[2] = {0, 0};    // reference pixel, 0-based
  double linear[2][2] = {};    // rows: x, y (deg); columns: pixel x, y
  double r0 = 0.0;             // the projection's sphere radius (deg)
  // Columns: the celestial unit vectors (x toward RA 0, z toward Dec 90) of
  // the native directions (phi, theta) = (0, 0), (90, 0) and theta = 90.
  double rotation[3][3] = {};
};

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
  // The chain above when this WCS is such a projection, else nullopt.
  std::optional<ZenithalChain> zenithal_chain() const;
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
