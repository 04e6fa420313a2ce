// Ellipses and apertures on the sky, and the projected disc geometry.
//
// A SkyEllipse is centred on an (east, north) offset, has its major axis along
// position angle `pa` (north through east), semi-major axis `a` in arcsec and
// axis ratio q = b/a in (0, 1]. For a thin inclined disc q = cos(inc).
//
// disc_coordinates() maps a sky offset to the disc plane: the radius R in
// arcsec (deprojected) and the azimuth theta in the disc measured from the
// receding major axis (PA = pa) towards the side at PA = pa + 90 deg (as the
// tilted-ring convention of Begeman 1989: cos(theta) = 1 on the receding major
// axis).
#pragma once

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum {

struct DiscPoint {
  double radius_arcsec = 0.0;  // deprojected radius
  double cos_theta = 1.0;      // cosine of the in-disc azimuth from the receding major axis
  double sin_theta = 0.0;
};

struct SkyEllipse {
  SkyOffset centre;
  Angle pa;                    // of the major axis
  double a_arcsec = 1.0;       // semi-major axis
  double q = 1.0;              // axis ratio b/a

  // Elliptical radius in units of a: < 1 inside.
  double scaled_radius(SkyOffset p) const;
  bool contains(SkyOffset p) const { return scaled_radius(p) <= 1.0; }
  // The same two with the PA's sine and cosine given (pa.sin(), pa.cos()),
  // for a loop over many points that takes them once: the same numbers, bit
  // for bit.
  double scaled_radius(SkyOffset p, double sin_pa, double cos_pa) const;
  bool contains(SkyOffset p, double sin_pa, double cos_pa) const {
    return scaled_radius(p, sin_pa, cos_pa) <= 1.0;
  }
  // Semi-major-axis-equivalent radius of `p` (arcsec): a * scaled_radius.
  double elliptical_radius_arcsec(SkyOffset p) const { return a_arcsec * scaled_radius(p); }
  // Point on the ellipse at eccentric anomaly t (radians, from the major axis
  // at PA = pa towards PA = pa + 90 deg).
  SkyOffset point_at(double t) const;
};

// Disc-plane coordinates of sky offset `p` for a disc centred at `centre`
// with kinematic position angle `pa` (receding side) and inclination `inc`.
DiscPoint disc_coordinates(SkyOffset p, SkyOffset centre, Angle pa, Angle inc);

}  // namespace fulcrum
