// Sky offsets of pixel centres for the zenithal TAN and SIN projections,
// without per-pixel trigonometry.
//
// The offsets of sky/offset_frame.hpp are the standard coordinates about a
// reference (xi, eta) = (c . e_east, c . e_north) / (c . e_ref) of the unit
// vector c of a sky position. For a TAN or SIN map c is a fixed rotation of
// the projection's native direction, which is algebraic in the pixel
// coordinates (io/wcs.hpp ZenithalChain): so the whole chain is one 3 x 3
// matrix and a division per pixel (a square root more for SIN), the same
// numbers as wcslib followed by OffsetFrame::to_offset to round-off. Other
// projections, and any grid where a check against wcslib at five pixels
// differs by more than 1e-9 arcsec + 1e-12 of the offset, are not handled
// (make() returns nullopt) and take wcslib's path.
//
// Units: pixels 0-based; offsets in arcsec, east and north.
#pragma once

#include <optional>

#include "fulcrum/io/wcs.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum {

class ZenithalOffsets {
 public:
  static std::optional<ZenithalOffsets> make(const CelestialWcs& wcs, const OffsetFrame& frame, int nx,
                                             int ny);
  // The offsets of pixel (x, y); false where a SIN pixel lies off the sphere.
  bool at(double x, double y, SkyOffset& out) const;
  // Rows [y0, y1) of a grid nx wide, x fastest (east[x + nx (y - y0)]);
  // false, with the arrays partly written, when a pixel is off the sphere.
  bool rows(int nx, int y0, int y1, double* east, double* north) const;

 private:
  ZenithalChain chain_;
  double m_[3][3] = {};  // (e_ref, e_east, e_north) rows x the native-to-celestial rotation
};

}  // namespace fulcrum
