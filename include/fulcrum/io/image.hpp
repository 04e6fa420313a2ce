// A 2-D sky image or a 3-D cube held in memory with what describes it.
//
// Data are doubles, x fastest: value(x, y) = data[x + nx * y] with 0-based
// pixel indices (the FITS pixel is index + 1). Missing pixels (BLANK, NaN) are
// NaN. BSCALE/BZERO are already applied. `unit` is BUNIT as written in the
// file (trimmed; empty when absent). `header` keeps the original header cards
// (80-character records) for anything a later stage needs, e.g. the spectral
// axis of a cube.
#pragma once

#include <cmath>
#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/beam.hpp"
#include "fulcrum/io/wcs.hpp"

namespace fulcrum {

struct Image {
  int nx = 0;
  int ny = 0;
  std::vector<double> data;
  CelestialWcs wcs;
  std::optional<Beam> beam;
  std::string unit;
  std::string path;    // where it was read from (for messages); may be empty
  std::string header;  // original header cards

  std::size_t size() const { return static_cast<std::size_t>(nx) * static_cast<std::size_t>(ny); }
  double& at(int x, int y) { return data[static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y]; }
  double at(int x, int y) const {
    return data[static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y];
  }
  bool contains(int x, int y) const { return x >= 0 && y >= 0 && x < nx && y < ny; }
  std::size_t finite_count() const {
    std::size_t n = 0;
    for (double v : data) n += std::isfinite(v) ? 1 : 0;
    return n;
  }
  // A same-grid image (WCS, beam, unit copied) filled with `fill`.
  Image like(double fill = 0.0) const {
    Image o;
    o.nx = nx; o.ny = ny; o.wcs = wcs; o.beam = beam; o.unit = unit;
    o.data.assign(size(), fill);
    return o;
  }
};

struct Cube {
  int nx = 0;
  int ny = 0;
  int nz = 0;  // channels
  std::vector<double> data;  // data[x + nx*(y + ny*z)]
  CelestialWcs wcs;          // celestial part only
  std::optional<Beam> beam;
  std::string unit;
  std::string path;
  std::string header;  // full header: spectral axis keywords live here
  int spectral_axis = 3;  // 1-based FITS axis number of the spectral axis in the file

  std::size_t plane_size() const { return static_cast<std::size_t>(nx) * static_cast<std::size_t>(ny); }
  double& at(int x, int y, int z) { return data[static_cast<std::size_t>(x) + nx * (static_cast<std::size_t>(y) + static_cast<std::size_t>(ny) * z)]; }
  double at(int x, int y, int z) const { return data[static_cast<std::size_t>(x) + nx * (static_cast<std::size_t>(y) + static_cast<std::size_t>(ny) * z)]; }
};

}  // namespace fulcrum
