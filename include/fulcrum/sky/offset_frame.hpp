// Offsets on the sky about a reference position: (east, north) in arcsec.
//
// The offsets are the standard coordinates of the gnomonic (tangent-plane)
// projection about the reference (ra0, dec0):
//   xi  = cos(dec) sin(ra - ra0) / D                         (east)
//   eta = (cos(dec0) sin(dec) - sin(dec0) cos(dec) cos(ra - ra0)) / D   (north)
//   D   = sin(dec0) sin(dec) + cos(dec0) cos(dec) cos(ra - ra0)
// (e.g. Calabretta & Greisen 2002, A&A 395, 1077, the TAN projection), in
// arcsec. Over a galaxy (arcminutes) this is exact to far below a micro-arcsec
// in the sense that the map is a true projection, and distances and angles
// about the reference are preserved to first order.
//
// The position angle of an offset is atan2(east, north), north through east.
#pragma once

#include <cmath>

#include "fulcrum/io/wcs.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum {

struct SkyOffset {
  double east = 0.0;   // arcsec
  double north = 0.0;  // arcsec
  double norm() const { return std::hypot(east, north); }
  // Position angle of this offset seen from the origin, in [0, 360) degrees.
  double pa_deg() const { return wrap_pa_deg(std::atan2(east, north) * 180.0 / std::numbers::pi); }
  SkyOffset operator+(SkyOffset o) const { return {east + o.east, north + o.north}; }
  SkyOffset operator-(SkyOffset o) const { return {east - o.east, north - o.north}; }
  SkyOffset operator*(double k) const { return {east * k, north * k}; }
};

// Unit vector on the sky pointing towards position angle `pa` (north through
// east): (east, north) = (sin pa, cos pa).
inline SkyOffset direction_of(Angle pa) { return {pa.sin(), pa.cos()}; }

class OffsetFrame {
 public:
  OffsetFrame() = default;
  explicit OffsetFrame(WorldCoord reference) : ref_(reference) {}
  const WorldCoord& reference() const { return ref_; }
  SkyOffset to_offset(WorldCoord w) const;
  WorldCoord to_world(SkyOffset o) const;

 private:
  WorldCoord ref_;
};

// Position angle (north through east, degrees in [0, 360)) of `to` seen from
// `from`, on the sphere: atan2(sin Δα cos δ2, cos δ1 sin δ2 − sin δ1 cos δ2 cos Δα).
double position_angle_deg(WorldCoord from, WorldCoord to);
// Great-circle separation in arcsec (Vincenty formula, stable at all angles).
double separation_arcsec(WorldCoord a, WorldCoord b);

}  // namespace fulcrum
